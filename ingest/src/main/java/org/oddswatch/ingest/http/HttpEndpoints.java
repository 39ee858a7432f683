package org.oddswatch.ingest.http;

import com.sun.net.httpserver.Headers;
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
import org.oddswatch.alerts.live.LiveSite;
import org.oddswatch.alerts.live.WebAnswer;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The service's read-only HTTP endpoints on the JDK's built-in server: {@code GET /metrics}
 * (Prometheus text), {@code GET /health} (200 {@code {"status":"ready"}} once state is rebuilt, else
 * 503 {@code {"status":"rebuilding"}}), {@code GET /status} (the status supplier as JSON) and, when
 * given a {@link LiveSite}, the live page at {@code /} and its API under {@code /api/}. Other paths
 * answer 404. Only GET and HEAD are served (HEAD: the GET's status and headers, no body); any other
 * method answers 405 with {@code Allow: GET, HEAD}.
 *
 * <p>Every answer carries {@value #NOSNIFF_HEADER}: nosniff, {@code Referrer-Policy: no-referrer},
 * {@code X-Frame-Options: DENY}, {@code Cache-Control: no-store} and a Content-Security-Policy: the
 * page's own (its inline parts by hash, requests to its own origin only), else {@value #STRICT_POLICY}.
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

    static { // unless the command line gives them
        System.getProperties().putIfAbsent("sun.net.httpserver.maxReqTime", Integer.toString(MAX_REQUEST_SECONDS));
        System.getProperties().putIfAbsent("sun.net.httpserver.maxRspTime", Integer.toString(MAX_RESPONSE_SECONDS));
        System.getProperties().putIfAbsent("sun.net.httpserver.timerMillis", "250"); // how often the limits are checked
    }

    /** The Content-Security-Policy of every answer but the live page: nothing may load or run. */
    static final String STRICT_POLICY = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";
    static final String NOSNIFF_HEADER = "X-Content-Type-Options";

    private record Reply(int status, String contentType, String body, String policy) {
        Reply(int status, String contentType, String body) {
            this(status, contentType, body, null);
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
     * @param ready whether state rebuild has finished
     * @param status the object {@code /status} renders as JSON
     */
    public static HttpEndpoints start(InetSocketAddress address, PrometheusMeterRegistry registry, BooleanSupplier ready,
                                      Supplier<?> status) throws IOException {
        return start(address, registry, ready, status, null);
    }

    /**
     * Binds and starts the endpoints with the live page and its API.
     *
     * @param site the page at {@code /} and the API under {@code /api/}, or null for neither
     */
    public static HttpEndpoints start(InetSocketAddress address, PrometheusMeterRegistry registry, BooleanSupplier ready,
                                      Supplier<?> status, LiveSite site) throws IOException {
        HttpServer server = HttpServer.create(address, 16);
        server.createContext("/", exchange -> respond(exchange, () -> {
            WebAnswer answer = site == null ? null
                    : site.answer(exchange.getRequestURI().getRawPath(), exchange.getRequestURI().getRawQuery());
            return answer == null ? notFound(exchange.getRequestURI().getPath())
                    : new Reply(answer.status(), answer.contentType(), answer.body(), answer.policy());
        }));
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

    private static Reply notFound(String path) {
        return new Reply(404, JSON, Json.write(Map.of("error", "not found: " + path)));
    }

    private static void respond(HttpExchange exchange, Supplier<Reply> source) throws IOException {
        try (exchange) {
            String path = exchange.getRequestURI().getPath();
            boolean head = "HEAD".equals(exchange.getRequestMethod());
            Reply reply;
            String context = exchange.getHttpContext().getPath();
            if (!context.equals("/") && !path.equals(context)) {
                reply = notFound(path);
            } else if (!head && !"GET".equals(exchange.getRequestMethod())) {
                reply = new Reply(405, JSON, Json.write(Map.of("error", "only GET and HEAD are served")));
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
            Headers headers = exchange.getResponseHeaders();
            headers.add("Content-Type", reply.contentType());
            headers.add("Content-Security-Policy", reply.policy() == null ? STRICT_POLICY : reply.policy());
            headers.add(NOSNIFF_HEADER, "nosniff");
            headers.add("Referrer-Policy", "no-referrer");
            headers.add("X-Frame-Options", "DENY");
            headers.add("Cache-Control", "no-store");
            exchange.sendResponseHeaders(reply.status(), head ? -1 : body.length);
            if (!head) {
                exchange.getResponseBody().write(body);
            }
        }
    }
}
