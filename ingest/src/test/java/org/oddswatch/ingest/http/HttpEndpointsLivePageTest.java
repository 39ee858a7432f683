package org.oddswatch.ingest.http;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.alerts.live.LiveSite;

/**
 * The endpoints with the live page: GET and HEAD only (every other method 405 with {@code Allow}, on
 * every path), HEAD without a body, unknown paths and streams 404, and the safety headers on every
 * answer: the page's own Content-Security-Policy on {@code /}, the strict one elsewhere, nosniff, no
 * referrer, no framing, no caching. Without a site, {@code /} is 404 as before.
 */
class HttpEndpointsLivePageTest {

    private final HttpClient client = HttpClient.newHttpClient();
    private final Map<String, Object> status = Map.of("state", "ready", "inputs", List.of());

    private HttpResponse<String> send(HttpEndpoints http, String method, String path) throws Exception {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http.port() + path));
        b.method(method, method.equals("POST") || method.equals("PUT")
                ? HttpRequest.BodyPublishers.ofString("{}") : HttpRequest.BodyPublishers.noBody());
        return client.send(b.build(), HttpResponse.BodyHandlers.ofString());
    }

    private static void assertSafetyHeaders(HttpResponse<String> r, String policy) {
        assertEquals(policy, r.headers().firstValue("Content-Security-Policy").orElse(null), r.uri().toString());
        assertEquals("nosniff", r.headers().firstValue("X-Content-Type-Options").orElse(null));
        assertEquals("no-referrer", r.headers().firstValue("Referrer-Policy").orElse(null));
        assertEquals("DENY", r.headers().firstValue("X-Frame-Options").orElse(null));
        assertEquals("no-store", r.headers().firstValue("Cache-Control").orElse(null));
    }

    @Test
    void servesThePageAndApiByGetAndHeadOnlyWithSafetyHeaders() throws Exception {
        LiveSite site = new LiveSite(new LiveHistory(), () -> status);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        try (HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry, () -> true,
                () -> status, site)) {
            HttpResponse<String> page = send(http, "GET", "/");
            assertEquals(200, page.statusCode());
            assertEquals(LiveSite.HTML, page.headers().firstValue("Content-Type").orElse(null));
            assertTrue(page.body().contains("not a diagnosis or proof of cause"));
            assertSafetyHeaders(page, site.policy());

            HttpResponse<String> head = send(http, "HEAD", "/");
            assertEquals(200, head.statusCode());
            assertEquals("", head.body(), "HEAD sends no body");
            assertSafetyHeaders(head, site.policy());

            HttpResponse<String> api = send(http, "GET", "/api/streams");
            assertEquals(200, api.statusCode());
            assertEquals("application/json; charset=utf-8", api.headers().firstValue("Content-Type").orElse(null));
            assertSafetyHeaders(api, HttpEndpoints.STRICT_POLICY);
            assertEquals(200, send(http, "HEAD", "/api/alerts").statusCode());

            for (String method : List.of("POST", "PUT", "DELETE", "PATCH", "OPTIONS")) {
                for (String path : List.of("/", "/api/streams", "/status", "/metrics")) {
                    HttpResponse<String> refused = send(http, method, path);
                    assertEquals(405, refused.statusCode(), method + " " + path);
                    assertEquals("GET, HEAD", refused.headers().firstValue("Allow").orElse(null));
                    assertSafetyHeaders(refused, HttpEndpoints.STRICT_POLICY);
                }
            }
            HttpResponse<String> unknown = send(http, "GET", "/api/streams/nowhere/estimates");
            assertEquals(404, unknown.statusCode());
            assertEquals("{\"error\":\"no such stream: nowhere\"}", unknown.body());
            assertEquals(404, send(http, "GET", "/index.html").statusCode());
            assertEquals(400, send(http, "GET", "/api/alerts?recent=100000").statusCode());
            HttpResponse<String> metrics = send(http, "GET", "/metrics");
            assertEquals(200, metrics.statusCode());
            assertSafetyHeaders(metrics, HttpEndpoints.STRICT_POLICY);
            assertSafetyHeaders(send(http, "GET", "/status"), HttpEndpoints.STRICT_POLICY);
        }
    }

    @Test
    void withoutASiteTheRootIsNotFound() throws Exception {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        try (HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry, () -> true,
                () -> status)) {
            assertEquals(404, send(http, "GET", "/").statusCode());
            assertEquals(404, send(http, "GET", "/api/streams").statusCode());
            assertEquals(200, send(http, "GET", "/status").statusCode());
        }
    }
}
