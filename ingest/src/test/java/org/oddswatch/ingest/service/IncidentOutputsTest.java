package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.sun.net.httpserver.HttpServer;
import java.io.InputStream;
import java.net.InetSocketAddress;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import java.util.concurrent.CopyOnWriteArrayList;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * One incident per change through the one output stage: a programme monitor and the same events
 * split by region, a household-contact odds ratio that rises in every region. The webhook (a real
 * HTTP server on the loopback interface) receives one message per change of an incident, the same
 * text as a replay's {@code incidents.jsonl}; the alerts are published as before, one per message
 * of each episode, without any incident field.
 */
class IncidentOutputsTest {

    private static final List<TestFeed.Event> DRIFTING = TestFeed.events(41, 12000, Instant.parse("2026-01-05T00:00:00Z"),
            Duration.ofDays(175), Duration.ofHours(6), Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north", "south");

    private static final String MONITOR = """
              - name: %s
                input: {topic: tests}
                event:
                  id: /id
                  time: /collectedAt
                  outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
            %s
                terms:
                  - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                  - {name: recent_travel, field: /exposure/travel, kind: binary, level: "yes", reference: "no"}
                window: {width: P28D, step: P7D, lateness: P2D, align: 2026-01-05T00:00:00Z}
                baseline: {from: 2026-01-05T00:00:00Z, to: 2026-03-02T00:00:00Z}
                rules:
                  guard: {minEvents: 200}
                  oddsRatioDrift: {limit: 3.0, clearLimit: 2.0, consecutive: 1, clearAfter: 2, terms: [household_contact]}
                  calibration: {}
                  cusum: {}
            """;

    private static String definition(String hook) {
        return "monitors:\n" + MONITOR.formatted("programme", "")
                + (hook == null ? "" : "    outputs: {webhook: {url: \"" + hook + "\", timeout: PT5S, attempts: 2}}\n")
                + MONITOR.formatted("by-region", "    split: {field: /region, maxStreams: 4}");
    }

    /** Records what the stage hands on, as published. */
    private static final class Recorder implements OutputSink {
        final List<Alert> alerts = new ArrayList<>();
        final List<String> alertJson = new ArrayList<>();
        final List<Incident> incidents = new ArrayList<>();
        final List<String> incidentJson = new ArrayList<>();

        @Override
        public void alert(Alert alert, Published published) {
            alerts.add(alert);
            alertJson.add(published.json());
        }

        @Override
        public void incident(Incident incident, Published published) {
            incidents.add(incident);
            incidentJson.add(published.json());
        }
    }

    @Test
    void theWebhookGetsOneMessagePerIncidentChangeAndTheAlertsStayAsTheyWere(@TempDir Path dir) throws Exception {
        List<String> received = new CopyOnWriteArrayList<>();
        List<String> keys = new CopyOnWriteArrayList<>();
        HttpServer server = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        server.createContext("/hook", exchange -> {
            try (InputStream in = exchange.getRequestBody()) {
                received.add(new String(in.readAllBytes(), StandardCharsets.UTF_8));
            }
            keys.add(exchange.getRequestHeaders().getFirst("Idempotency-Key"));
            exchange.sendResponseHeaders(204, -1);
            exchange.close();
        });
        server.start();
        Recorder programme = new Recorder();
        Recorder regions = new Recorder();
        Path events = dir.resolve("events.jsonl");
        Files.write(events, DRIFTING.stream().map(TestFeed.Event::text).toList(), StandardCharsets.UTF_8);
        Path yaml = dir.resolve("incidents.yaml");
        Files.writeString(yaml, definition(null), StandardCharsets.UTF_8);
        try {
            String url = "http://127.0.0.1:" + server.getAddress().getPort() + "/hook";
            MonitorConfig config = DefinitionLoader.parse("incidents.yaml", definition(url), java.util.Map.of(), null);
            assertEquals(WebhookSink.Carries.INCIDENTS, config.monitors().get(0).outputs().webhook().send(),
                    "incidents unless the definition says episodes");
            WebhookSink webhook = new WebhookSink("programme", WebhookSink.Carries.INCIDENTS, URI.create(url),
                    Duration.ofSeconds(5), 2);
            try (webhook) {
                OutputStage stage = new OutputStage(config.monitors(), m -> m.name().equals("programme")
                        ? List.of(programme, webhook) : List.of(regions));
                MonitorPipeline pipeline = new MonitorPipeline("tests", config.monitors(), stage,
                        PipelineSettings.defaults().withReplayHint(new ReplayHint(yaml.toString(), events.toString(), null)));
                long line = 0;
                for (TestFeed.Event e : DRIFTING) {
                    pipeline.offer(e.json(), RecordOrigin.line(++line), false);
                }
                pipeline.closeAll();
                assertTrue(webhook.awaitIdle(Duration.ofSeconds(30)));
                assertEquals(0, webhook.failures());
            }
        } finally {
            server.stop(0);
        }
        List<Alert> alerts = new ArrayList<>(programme.alerts);
        alerts.addAll(regions.alerts);
        List<Incident> incidents = new ArrayList<>(programme.incidents);
        incidents.addAll(regions.incidents);
        long raised = alerts.stream().filter(a -> a.state() == AlertState.RAISED).count();
        assertTrue(raised >= 3, "the rise is seen on the programme and in both regions: " + raised + " episodes");
        assertTrue(alerts.stream().anyMatch(a -> a.stream().equals("programme")));
        assertTrue(alerts.stream().anyMatch(a -> a.stream().startsWith("by-region/")));

        // The webhook got exactly the incident messages of the programme's outputs, in order, each once.
        assertEquals(programme.incidentJson, received);
        assertEquals(received.size(), new HashSet<>(keys).size(), "one idempotency key per change");
        // One message per change: an opening per incident, one per joining or ending episode, no more.
        Set<String> ids = new HashSet<>();
        incidents.forEach(i -> ids.add(i.id()));
        long cleared = alerts.stream().filter(a -> a.state() == AlertState.CLEARED).count();
        assertEquals(raised + cleared, incidents.size(), "opened/joined per raised episode, updated/resolved per clearing");
        assertTrue(ids.size() < raised, ids.size() + " incidents for " + raised + " episodes: agreeing ones grouped");
        assertTrue(incidents.stream().anyMatch(i -> i.streams().contains("programme")
                && i.streams().stream().anyMatch(s -> s.startsWith("by-region/"))), "a region and its programme agree");
        // Every raised episode is evidence in exactly one incident.
        for (Alert a : alerts) {
            if (a.state() == AlertState.RAISED) {
                assertEquals(1, incidents.stream().filter(i -> i.evidence().stream().anyMatch(e -> e.episode().equals(a.id())))
                        .map(Incident::id).distinct().count(), a.id());
            }
        }
        // The alerts are published exactly as the record writes them: no incident field, nothing else changed.
        for (int i = 0; i < programme.alerts.size(); i++) {
            assertEquals(Json.write(programme.alerts.get(i)), programme.alertJson.get(i));
            assertFalse(Json.mapper().readTree(programme.alertJson.get(i)).has("incident"));
        }

        // A replay of the same events writes the same incident messages (the first stream's monitor is
        // the programme or a region; the file holds both) and the same alerts.
        ReplayRunner.run(ReplayRequest.of(yaml, events, dir.resolve("out")));
        List<String> replayed = Files.readAllLines(dir.resolve("out").resolve(ReplayRunner.INCIDENTS));
        List<String> live = new ArrayList<>();
        for (String json : replayed) {
            JsonNode node = Json.mapper().readTree(json);
            assertTrue(node.path("message").asText().contains("not a diagnosis or proof of cause"), json);
        }
        programme.incidentJson.forEach(live::add);
        regions.incidentJson.forEach(live::add);
        assertEquals(live.size(), replayed.size());
        assertTrue(Set.copyOf(live).equals(Set.copyOf(replayed)), "live equals replay");
        assertEquals(alerts.size(), Files.readAllLines(dir.resolve("out").resolve(ReplayRunner.ALERTS)).size());
    }
}
