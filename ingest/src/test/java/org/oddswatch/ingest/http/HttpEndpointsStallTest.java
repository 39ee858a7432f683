package org.oddswatch.ingest.http;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.OutputStream;
import java.net.InetSocketAddress;
import java.net.Socket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * Clients that open a connection, send half a request line and stall must not keep the probes from
 * an answer: {@code /health}, {@code /metrics} and {@code /status} answer while fewer connections
 * than the server's workers stall, and once more stall, as soon as the request time limit closes
 * the stalled ones.
 */
class HttpEndpointsStallTest {

    @Test
    void stalledConnectionsDoNotBlockTheProbes() throws Exception {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        try (HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry, () -> true,
                () -> Map.of("state", "ready"))) {
            HttpClient client = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(1)).build();
            List<Socket> stalled = new ArrayList<>();
            // Warm up the client and the server's classes: the limits below are about stalls only.
            assertEquals(200, get(client, http.port(), "/health", Duration.ofSeconds(10)));
            try {
                stall(stalled, http.port(), HttpEndpoints.WORKERS - 2);
                // Free workers remain: every probe answers before the request time limit (2 s) could
                // have freed a worker.
                for (String path : List.of("/health", "/metrics", "/status")) {
                    assertEquals(200, get(client, http.port(), path, Duration.ofMillis(1500)), path);
                }
                stall(stalled, http.port(), HttpEndpoints.WORKERS + 4);
                // Every worker is held: the request time limit (2 s) frees them, then the probe answers.
                assertEquals(200, get(client, http.port(), "/health",
                        Duration.ofSeconds(2L * HttpEndpoints.MAX_REQUEST_SECONDS + 2)));
            } finally {
                for (Socket s : stalled) {
                    s.close();
                }
            }
        }
    }

    private static void stall(List<Socket> into, int port, int count) throws Exception {
        for (int i = 0; i < count; i++) {
            Socket socket = new Socket("127.0.0.1", port);
            OutputStream out = socket.getOutputStream();
            out.write("GET /hea".getBytes(StandardCharsets.US_ASCII));
            out.flush();
            into.add(socket);
        }
        Thread.sleep(300); // the server has taken them up
    }

    private static int get(HttpClient client, int port, String path, Duration timeout) throws Exception {
        return client.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + port + path)).timeout(timeout).build(),
                HttpResponse.BodyHandlers.discarding()).statusCode();
    }
}
