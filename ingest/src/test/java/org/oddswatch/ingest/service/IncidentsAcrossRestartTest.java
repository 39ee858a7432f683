package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.live.WebAnswer;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * An incident open when the service stops goes on after the restart: the rebuilt service reads the
 * published alerts back, so the first episode's later messages continue the same incident (no second
 * {@code opened} message, the next revision) and its clearing resolves it under the same id. The
 * incident messages of the two runs together are those of a replay of all events, byte for byte.
 */
class IncidentsAcrossRestartTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    /** Where the first run's events end: the household-contact odds ratio has risen since 2026-04-06. */
    private static final Instant RESTART = Instant.parse("2026-05-04T00:00:00Z");

    @Test
    void anIncidentOpenAtARestartGoesOnAndResolvesUnderItsId(@TempDir Path dir) throws Exception {
        String prefix = "increstart";
        String input = prefix + "-tests";
        KAFKA.createTopic(input, 1);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        // about 70 events a day; the odds ratio of household contact rises e^1.5-fold from 2026-04-06 ...
        List<TestFeed.Event> before = TestFeed.events(43, 8500, START, Duration.between(START, RESTART), Duration.ZERO,
                Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north");
        // ... and is back at the baseline's after the restart, so the drift episode clears
        List<TestFeed.Event> after = TestFeed.events(44, 4500, RESTART, Duration.ofDays(63), Duration.ZERO, "north");
        MonitorConfig config = TestDefinitions.config(TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, input,
                null));

        ServiceTestSupport.produce(KAFKA, input, before, true);
        List<JsonNode> first;
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-1").start()) {
            ServiceTestSupport.awaitTrue("a raised alert after the rise", Duration.ofSeconds(90),
                    () -> !openAtEnd(incidents(service)).isEmpty());
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, Duration.ofSeconds(60));
            first = incidents(service);
        }
        Set<String> open = openAtEnd(first);
        assertEquals(1, open.size(), "one incident open at the restart: " + changes(first));

        ServiceTestSupport.produce(KAFKA, input, after, true);
        List<JsonNode> second;
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-2").start()) {
            ServiceTestSupport.awaitTrue("the open incident resolved", Duration.ofSeconds(120),
                    () -> incidents(service).stream().anyMatch(i -> open.contains(i.path("id").asText())
                            && i.path("change").asText().equals("resolved")));
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, Duration.ofSeconds(60));
            second = incidents(service);
        }
        String id = open.iterator().next();
        int revision = first.stream().filter(i -> i.path("id").asText().equals(id))
                .mapToInt(i -> i.path("revision").asInt()).max().orElseThrow();
        List<JsonNode> continued = second.stream().filter(i -> i.path("id").asText().equals(id)).toList();
        assertEquals("resolved", continued.get(continued.size() - 1).path("change").asText());
        assertTrue(continued.stream().noneMatch(i -> i.path("change").asText().equals("opened")),
                "no second opening after the restart: " + changes(second));
        assertEquals(revision + 1, continued.get(0).path("revision").asInt(), "the revision goes on");

        // the two runs together: the replay's incident messages, byte for byte
        Path events = dir.resolve("events.jsonl");
        List<String> lines = new ArrayList<>();
        before.forEach(e -> lines.add(e.text()));
        after.forEach(e -> lines.add(e.text()));
        Files.write(events, lines, StandardCharsets.UTF_8);
        ReplayRunner.run(config, new ReplayRequest(null, events, dir.resolve("out"), null, null, null, input, false));
        // (a replay of a file names the file in its replay command where the service names its topic)
        List<String> replayed = Files.readAllLines(dir.resolve("out").resolve(ReplayRunner.INCIDENTS)).stream()
                .map(line -> line.replace("--input " + events, "--topic " + input)).toList();
        List<String> live = new ArrayList<>();
        first.forEach(i -> live.add(Json.write(i)));
        second.forEach(i -> live.add(Json.write(i)));
        assertEquals(replayed, live);
    }

    /** The incident messages this service sent, oldest first, as its live API gives them. */
    private static List<JsonNode> incidents(MonitorService service) {
        WebAnswer answer = service.site().answer("/api/alerts", "recent=200");
        List<JsonNode> out = new ArrayList<>();
        ServiceTestSupport.tree(answer.body()).path("incidents").path("recent").forEach(i -> out.add(0, i));
        return out;
    }

    /** The ids of the incidents whose newest message is not a resolution. */
    private static Set<String> openAtEnd(List<JsonNode> incidents) {
        Map<String, String> newest = new LinkedHashMap<>();
        incidents.forEach(i -> newest.put(i.path("id").asText(), i.path("change").asText()));
        Set<String> open = new LinkedHashSet<>();
        newest.forEach((id, change) -> {
            if (!change.equals("resolved")) {
                open.add(id);
            }
        });
        return open;
    }

    private static List<String> changes(List<JsonNode> incidents) {
        return incidents.stream().map(i -> i.path("change").asText()).toList();
    }
}
