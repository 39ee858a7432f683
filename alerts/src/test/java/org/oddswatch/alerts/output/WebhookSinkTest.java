package org.oddswatch.alerts.output;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTimeoutPreemptively;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.sun.net.httpserver.HttpServer;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;

/** The webhook against a real HTTP server on the loopback interface. */
class WebhookSinkTest {

    private HttpServer server;
    private final CountDownLatch release = new CountDownLatch(1);

    @AfterEach
    void stop() {
        release.countDown();
        if (server != null) {
            server.stop(0);
        }
    }

    private static Alert alert() {
        return new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null)
                .onFinalEstimate(Fixtures.windowWithZ(0, 4)).get(0);
    }

    private URI start(com.sun.net.httpserver.HttpHandler handler) throws Exception {
        server = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        server.createContext("/hook", handler);
        server.setExecutor(java.util.concurrent.Executors.newFixedThreadPool(4));
        server.start();
        return URI.create("http://127.0.0.1:" + server.getAddress().getPort() + "/hook");
    }

    /** The alert as the output stage hands it on (nothing withheld in these fixtures). */
    private static Published published(Alert alert) {
        return new Published("resp", alert.id(), PublishedAlert.json(alert, SmallCellPolicy.DEFAULT));
    }

    private static double count(SimpleMeterRegistry r, String name, String tag, String value) {
        var c = r.find(name).tag(tag, value).functionCounter();
        return c == null ? 0 : c.count();
    }

    @Test
    void failingFirstAttemptsAreRetriedWithBackoffThenDelivered() throws Exception {
        AtomicInteger calls = new AtomicInteger();
        List<String> bodies = new CopyOnWriteArrayList<>();
        List<String> keys = new CopyOnWriteArrayList<>();
        URI url = start(exchange -> {
            bodies.add(new String(exchange.getRequestBody().readAllBytes(), StandardCharsets.UTF_8));
            keys.add(exchange.getRequestHeaders().getFirst("Idempotency-Key"));
            int status = calls.incrementAndGet() <= 2 ? 503 : 204;
            exchange.sendResponseHeaders(status, -1);
            exchange.close();
        });
        SimpleMeterRegistry registry = new SimpleMeterRegistry();
        Alert a = alert();
        try (WebhookSink sink = new WebhookSink("resp", url, Duration.ofSeconds(5), 4, Duration.ofMillis(20), 10)) {
            sink.bindTo(registry);
            sink.alert(a, published(a));
            assertTrue(sink.awaitIdle(Duration.ofSeconds(30)));
            assertEquals(1, sink.delivered());
            assertEquals(0, sink.failures());
        }
        assertEquals(3, calls.get());
        JsonNode sent = Json.mapper().readTree(bodies.get(2));
        assertEquals(a.id(), sent.get("id").asText());
        assertEquals(Json.write(a), bodies.get(0), "the body is the alert JSON");
        assertEquals(a.id() + ":raised:" + a.windowEnd(), keys.get(0));
        assertEquals(2.0, count(registry, OddswatchMeters.WEBHOOK_ATTEMPTS, "outcome", "status"));
        assertEquals(1.0, count(registry, OddswatchMeters.WEBHOOK_ATTEMPTS, "outcome", "success"));
    }

    @Test
    void anIncidentWebhookPostsIncidentMessagesOnlyAndAnEpisodeWebhookAlertsOnly() throws Exception {
        List<String> bodies = new CopyOnWriteArrayList<>();
        List<String> keys = new CopyOnWriteArrayList<>();
        URI url = start(exchange -> {
            bodies.add(new String(exchange.getRequestBody().readAllBytes(), StandardCharsets.UTF_8));
            keys.add(exchange.getRequestHeaders().getFirst("Idempotency-Key"));
            exchange.sendResponseHeaders(204, -1);
            exchange.close();
        });
        Alert a = alert();
        Incident incident = IncidentTracker.sameStream().accept(a).orElseThrow();
        Published message = new Published("resp", incident.id(), Json.write(incident));
        try (WebhookSink sink = new WebhookSink("resp", WebhookSink.Carries.INCIDENTS, url, Duration.ofSeconds(5), 2)) {
            sink.alert(a, published(a));
            sink.incident(incident, message);
            assertTrue(sink.awaitIdle(Duration.ofSeconds(30)));
            assertEquals(1, sink.delivered());
        }
        assertEquals(List.of(message.json()), bodies, "the incident's JSON, not the alert's");
        assertEquals(List.of(incident.id() + ":1"), keys);
        try (WebhookSink sink = new WebhookSink("resp", WebhookSink.Carries.EPISODES, url, Duration.ofSeconds(5), 2)) {
            sink.incident(incident, message);
            sink.alert(a, published(a));
            assertTrue(sink.awaitIdle(Duration.ofSeconds(30)));
        }
        assertEquals(List.of(message.json(), Json.write(a)), bodies);
    }

    @Test
    void exhaustedAttemptsAreCountedAsAFailure() throws Exception {
        URI url = start(exchange -> {
            exchange.sendResponseHeaders(500, -1);
            exchange.close();
        });
        SimpleMeterRegistry registry = new SimpleMeterRegistry();
        try (WebhookSink sink = new WebhookSink("resp", url, Duration.ofSeconds(5), 3, Duration.ofMillis(5), 10)) {
            sink.bindTo(registry);
            sink.alert(alert(), published(alert()));
            assertTrue(sink.awaitIdle(Duration.ofSeconds(30)));
            assertEquals(0, sink.delivered());
            assertEquals(1, sink.failures());
        }
        assertEquals(3.0, count(registry, OddswatchMeters.WEBHOOK_ATTEMPTS, "outcome", "status"));
        assertEquals(1.0, count(registry, OddswatchMeters.WEBHOOK_FAILURES, "reason", "attempts-exhausted"));
        assertEquals("resp", registry.get(OddswatchMeters.WEBHOOK_FAILURES).tag("reason", "attempts-exhausted")
                .functionCounter().getId().getTag("monitor"));
    }

    @Test
    void aHangingServerTimesOutWithoutHoldingUpThePublisher() throws Exception {
        CountDownLatch entered = new CountDownLatch(1);
        URI url = start(exchange -> {
            entered.countDown();
            try {
                release.await(60, TimeUnit.SECONDS);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
            exchange.close();
        });
        SimpleMeterRegistry registry = new SimpleMeterRegistry();
        // Attempts time out after 1.5 s: the first alert holds the worker for two attempts (3 s), long
        // enough on a loaded machine for the next two calls to find it busy (at 300 ms a slow machine let
        // the worker take the queued alert before the third call, which was then queued, not dropped).
        try (WebhookSink sink = new WebhookSink("resp", url, Duration.ofMillis(1500), 2, Duration.ofMillis(10), 1)) {
            sink.bindTo(registry);
            // publish must return while the server still holds the request: the server is released
            // only after every publish call below has returned (a deadlock guard, not a timing check)
            assertTimeoutPreemptively(Duration.ofSeconds(30), () -> {
                sink.alert(alert(), published(alert()));
                assertTrue(entered.await(30, TimeUnit.SECONDS), "the request reached the server");
                assertEquals(1, release.getCount(), "the server has not answered");
                sink.alert(alert(), published(alert())); // queued (capacity 1)
                sink.alert(alert(), published(alert())); // queue full: dropped and counted
            });
            assertTrue(sink.awaitIdle(Duration.ofSeconds(30)));
            // both accepted alerts time out on each of their 2 attempts
            assertEquals(3, sink.failures(), "two exhausted, one dropped");
        }
        assertEquals(4.0, count(registry, OddswatchMeters.WEBHOOK_ATTEMPTS, "outcome", "timeout"));
        assertEquals(1.0, count(registry, OddswatchMeters.WEBHOOK_FAILURES, "reason", "queue-full"));
        assertEquals(2.0, count(registry, OddswatchMeters.WEBHOOK_FAILURES, "reason", "attempts-exhausted"));
    }
}
