package org.oddswatch.ingest.http;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.io.OutputStream;
import java.net.InetSocketAddress;
import java.nio.charset.StandardCharsets;
import java.util.Map;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.function.BooleanSupplier;
import java.util.function.Supplier;
import org.oddswatch.alerts.json.Json;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The service's three read-only HTTP endpoints, served by the JDK's built-in server on one small
 * thread pool:
 * <ul>
 *   <li>{@code GET /metrics}: Prometheus text exposition of the meter registry;</li>
 *   <li>{@code GET /health}: 200 {@code {"status":"ready"}} once state is rebuilt, otherwise 503
 *       {@code {"status":"rebuilding"}} (also while starting and once stopping; {@code /status}
 *       tells these apart);</li>
 *   <li>{@code GET /status}: the JSON of the status supplier (streams, last final windows, counts, lag).</li>
 * </ul>
 * Other paths answer 404, other methods 405.
 *
 * <p>A client that opens a connection and never finishes its request must not hold up the probes.
 * The JDK server reads a request on one of the executor's threads with no read timeout of its own,
 * so the endpoints run {@value #WORKERS} threads and bound the time a request and a response may
 * take through the server's documented system properties {@code sun.net.httpserver.maxReqTime}
 * and {@code sun.net.httpserver.maxRspTime} (seconds; the {@code jdk.httpserver} module
 * description lists them), set here to {@value #MAX_REQUEST_SECONDS} and
 * {@value #MAX_RESPONSE_SECONDS} s unless given on the command line: a stalled connection is closed
 * after at most that time, and a probe gets a free thread at once while fewer than
 * {@value #WORKERS} connections stall. The server reads the properties once, when it is first
 * used in the JVM, so they are set before the first server is created.
 */
public final class HttpEndpoints implements AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(HttpEndpoints.class);
    private static final String JSON = "application/json";
    private static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";
    /** Threads serving requests. */
    static final int WORKERS = 8;
    /** Longest time to receive a request's line and headers, in seconds. */
    static final int MAX_REQUEST_SECONDS = 2;
    /** Longest time to send a response, in seconds (a /metrics scrape of a large registry included). */
    static final int MAX_RESPONSE_SECONDS = 30;

    static {
        boundRequestTimes();
    }

    /** Sets the JDK server's request and response time limits unless the command line gave them. */
    static void boundRequestTimes() {
        if (System.getProperty("sun.net.httpserver.maxReqTime") == null) {
            System.setProperty("sun.net.httpserver.maxReqTime", Integer.toString(MAX_REQUEST_SECONDS));
        }
        if (System.getProperty("sun.net.httpserver.maxRspTime") == null) {
            System.setProperty("sun.net.httpserver.maxRspTime", Integer.toString(MAX_RESPONSE_SECONDS));
        }
        // How often the server checks the limits (milliseconds; 1000 by default).
        if (System.getProperty("sun.net.httpserver.timerMillis") == null) {
            System.setProperty("sun.net.httpserver.timerMillis", "250");
        }
    }

    private final HttpServer server;
    private final ExecutorService executor;

    private HttpEndpoints(HttpServer server, ExecutorService executor) {
        this.server = server;
        this.executor = executor;
    }

    /**
     * Binds and starts the endpoints.
     *
     * @param address where to listen; port 0 picks a free port (see {@link #port()})
     * @param registry the registry scraped by {@code /metrics}
     * @param ready whether state rebuild has finished
     * @param status the object rendered as JSON by {@code /status}
     */
    public static HttpEndpoints start(InetSocketAddress address, PrometheusMeterRegistry registry, BooleanSupplier ready,
                                      Supplier<?> status) throws IOException {
        HttpServer server = HttpServer.create(address, 16);
        server.createContext("/metrics", exchange -> respond(exchange, () ->
                new Reply(200, PROMETHEUS_TEXT, registry.scrape())));
        server.createContext("/health", exchange -> respond(exchange, () -> ready.getAsBoolean()
                ? new Reply(200, JSON, Json.write(Map.of("status", "ready")))
                : new Reply(503, JSON, Json.write(Map.of("status", "rebuilding")))));
        server.createContext("/status", exchange -> respond(exchange, () ->
                new Reply(200, JSON, Json.write(status.get()))));
        ExecutorService executor = Executors.newFixedThreadPool(WORKERS, runnable -> {
            Thread thread = new Thread(runnable, "oddswatch-http");
            thread.setDaemon(true);
            return thread;
        });
        server.setExecutor(executor);
        server.start();
        return new HttpEndpoints(server, executor);
    }

    /**
     * Parses {@code host:port} (IPv6 hosts in brackets).
     *
     * @throws IllegalArgumentException naming the value when it is not of that form
     */
    public static InetSocketAddress parseAddress(String hostPort) {
        int colon = hostPort.lastIndexOf(':');
        if (colon <= 0 || colon == hostPort.length() - 1) {
            throw new IllegalArgumentException("HTTP address must be host:port, got '" + hostPort + "'");
        }
        String host = hostPort.substring(0, colon);
        if (host.startsWith("[") && host.endsWith("]")) {
            host = host.substring(1, host.length() - 1);
        }
        int port;
        try {
            port = Integer.parseInt(hostPort.substring(colon + 1));
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("HTTP address must be host:port, got '" + hostPort + "'");
        }
        if (port < 0 || port > 65535) {
            throw new IllegalArgumentException("HTTP port out of range in '" + hostPort + "'");
        }
        return new InetSocketAddress(host, port);
    }

    /** The bound port (useful after binding port 0). */
    public int port() {
        return server.getAddress().getPort();
    }

    public InetSocketAddress address() {
        return server.getAddress();
    }

    @Override
    public void close() {
        server.stop(0);
        executor.shutdownNow();
    }

    private record Reply(int status, String contentType, String body) {
    }

    private interface ReplySource {
        Reply get();
    }

    private static void respond(HttpExchange exchange, ReplySource source) throws IOException {
        try (exchange) {
            Reply reply;
            String path = exchange.getRequestURI().getPath();
            if (!path.equals(exchange.getHttpContext().getPath())) {
                reply = new Reply(404, JSON, Json.write(Map.of("error", "not found: " + path)));
            } else if (!"GET".equals(exchange.getRequestMethod()) && !"HEAD".equals(exchange.getRequestMethod())) {
                reply = new Reply(405, JSON, Json.write(Map.of("error", "only GET is served")));
                exchange.getResponseHeaders().add("Allow", "GET, HEAD");
            } else {
                try {
                    reply = source.get();
                } catch (RuntimeException e) {
                    LOG.warn("HTTP {} failed", path, e);
                    reply = new Reply(500, JSON, Json.write(Map.of("error", String.valueOf(e.getMessage()))));
                }
            }
            byte[] body = reply.body().getBytes(StandardCharsets.UTF_8);
            exchange.getResponseHeaders().add("Content-Type", reply.contentType());
            boolean head = "HEAD".equals(exchange.getRequestMethod());
            exchange.sendResponseHeaders(reply.status(), head ? -1 : body.length);
            if (!head) {
                try (OutputStream out = exchange.getResponseBody()) {
                    out.write(body);
                }
            }
        }
    }
}
