package org.oddswatch.ingest.http;

import com.sun.net.httpserver.HttpExchange;
import com.sun.net.httpserver.HttpServer;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
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
 * The service's read-only HTTP endpoints on the JDK's built-in server: {@code GET /metrics}
 * (Prometheus text), {@code GET /health} (200 {@code {"status":"ready"}} once state is rebuilt, else
 * 503 {@code {"status":"rebuilding"}}) and {@code GET /status} (the status supplier as JSON). Other
 * paths answer 404, other methods 405.
 *
 * <p>The JDK server reads a request on an executor thread with no read timeout of its own, so a
 * client that never finishes its request holds a thread. The endpoints run {@value #WORKERS} threads
 * and, unless the command line sets them, bound a request to {@value #MAX_REQUEST_SECONDS} s and a
 * response to {@value #MAX_RESPONSE_SECONDS} s through the server's system properties
 * {@code sun.net.httpserver.maxReqTime} and {@code maxRspTime} (see the {@code jdk.httpserver}
 * module description), which it reads once, when first used.
 */
public final class HttpEndpoints implements AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(HttpEndpoints.class);
    private static final String JSON = "application/json";
    private static final String PROMETHEUS_TEXT = "text/plain; version=0.0.4; charset=utf-8";
    /** Threads serving requests. */
    static final int WORKERS = 8;
    /** Longest time to receive a request's line and headers, in seconds. */
    static final int MAX_REQUEST_SECONDS = 2;
    /** Longest time to send a response (a large /metrics scrape included), in seconds. */
    static final int MAX_RESPONSE_SECONDS = 30;

    static {
        setUnlessGiven("sun.net.httpserver.maxReqTime", Integer.toString(MAX_REQUEST_SECONDS));
        setUnlessGiven("sun.net.httpserver.maxRspTime", Integer.toString(MAX_RESPONSE_SECONDS));
        setUnlessGiven("sun.net.httpserver.timerMillis", "250"); // how often the limits are checked
    }

    private static void setUnlessGiven(String property, String value) {
        if (System.getProperty(property) == null) {
            System.setProperty(property, value);
        }
    }

    private record Reply(int status, String contentType, String body) {
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
     * @param ready whether state rebuild has finished
     * @param status the object {@code /status} renders as JSON
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
        int port;
        try {
            port = Integer.parseInt(hostPort.substring(colon + 1));
        } catch (NumberFormatException e) {
            port = -1;
            colon = 0;
        }
        if (colon <= 0) {
            throw new IllegalArgumentException("HTTP address must be host:port, got '" + hostPort + "'");
        }
        if (port < 0 || port > 65535) {
            throw new IllegalArgumentException("HTTP port out of range in '" + hostPort + "'");
        }
        String host = hostPort.substring(0, colon);
        boolean bracketed = host.startsWith("[") && host.endsWith("]");
        return new InetSocketAddress(bracketed ? host.substring(1, host.length() - 1) : host, port);
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

    private static void respond(HttpExchange exchange, Supplier<Reply> source) throws IOException {
        try (exchange) {
            String path = exchange.getRequestURI().getPath();
            boolean head = "HEAD".equals(exchange.getRequestMethod());
            Reply reply;
            if (!path.equals(exchange.getHttpContext().getPath())) {
                reply = new Reply(404, JSON, Json.write(Map.of("error", "not found: " + path)));
            } else if (!head && !"GET".equals(exchange.getRequestMethod())) {
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
            exchange.sendResponseHeaders(reply.status(), head ? -1 : body.length);
            if (!head) {
                exchange.getResponseBody().write(body);
            }
        }
    }
}
