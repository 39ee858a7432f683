package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * {@code outputs.estimatesFile} on a real broker: the live service appends every final estimate, as
 * published on the estimates topic (small cells withheld), to the JSON Lines file; a restart appends
 * to what is there; and a file that cannot be written does not stop the service.
 */
class ServiceEstimatesFileTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(90);
    private static final String[] REGIONS = {"north", "south", "east"};

    @TempDir
    Path dir;

    /**
     * Six streams' worth of sparse events (about 31 per 28-day window and stream, roughly one in six
     * positive), so that many windows have 1 to 4 positives and are published with small cells
     * withheld.
     */
    private static List<TestFeed.Event> sparse(int count, Instant start, Duration span) {
        return TestFeed.events(47, count, start, span, Duration.ZERO, REGIONS);
    }

    private static MonitorConfig config(String prefix, Path estimatesFile) {
        for (String topic : List.of("-tests", "-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + topic, 1);
        }
        return TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), prefix + "-tests", prefix,
                prefix + "-group", 8, "P3650D") + "      estimatesFile: \"" + estimatesFile + "\"\n");
    }

    /** Runs one service until it has committed everything on the input topic, then stops it cleanly. */
    private static SimpleMeterRegistry runUntilCaughtUp(MonitorConfig config, String prefix, long accepted) {
        SimpleMeterRegistry registry = new SimpleMeterRegistry();
        try (MonitorService service = new MonitorService(config, registry, prefix).start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            assertNull(service.failure());
            assertEquals(accepted, service.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
        }
        return registry;
    }

    /** The file's lines by estimate key; fails on a line that is not a final estimate or on a repeated key. */
    private static Map<String, String> linesByKey(Path file) throws Exception {
        Map<String, String> out = new TreeMap<>();
        for (String line : Files.readAllLines(file, StandardCharsets.UTF_8)) {
            JsonNode e = ServiceTestSupport.tree(line);
            assertEquals("final", e.path("status").asText(), "only final estimates: " + line);
            String key = e.path("stream").asText() + "|" + e.path("windowEnd").asText();
            assertNull(out.put(key, line), "one line per window after clean stops: " + key);
        }
        return out;
    }

    @Test
    void finalEstimatesAreAppendedAsPublishedAcrossARestart() throws Exception {
        String prefix = "efile";
        Path file = dir.resolve("out").resolve("estimates.jsonl"); // the folder does not exist yet
        MonitorConfig config = config(prefix, file);
        Instant start = Instant.parse("2026-01-05T00:00:00Z");
        List<TestFeed.Event> first = sparse(400, start, Duration.ofDays(60));
        List<TestFeed.Event> second = sparse(400, start.plus(Duration.ofDays(60)), Duration.ofDays(60));

        ServiceTestSupport.produce(KAFKA, prefix + "-tests", first, true, true);
        runUntilCaughtUp(config, prefix, first.size());
        int afterFirstRun = Files.readAllLines(file, StandardCharsets.UTF_8).size();
        assertTrue(afterFirstRun > 0, "the first run wrote final estimates");

        ServiceTestSupport.produce(KAFKA, prefix + "-tests", second, true, true);
        runUntilCaughtUp(config, prefix, second.size());

        Map<String, String> lines = linesByKey(file);
        assertTrue(lines.size() > afterFirstRun, "the restarted service appended: " + afterFirstRun + " then "
                + lines.size());
        // The same text as the estimates topic, window for window: the small-cell rule applied once.
        ServiceTestSupport.assertSameEstimates(ServiceTestSupport.finals(KAFKA, prefix + "-estimates"), lines);
        long withheld = lines.values().stream().filter(json -> ServiceTestSupport.tree(json).has("withheld")).count();
        assertTrue(withheld > 0, "some windows have small cells withheld: " + withheld + " of " + lines.size());
        for (String json : lines.values()) {
            JsonNode e = ServiceTestSupport.tree(json);
            if (!e.has("withheld")) {
                long cases = e.get("cases").asLong();
                long negatives = e.get("events").asLong() - cases;
                assertFalse(cases > 0 && cases < 5 || negatives > 0 && negatives < 5, "a small cell shown: " + json);
            }
        }
        // Live equals replay: the replay of all events writes the same lines for the windows both have.
        List<TestFeed.Event> all = new java.util.ArrayList<>(first);
        all.addAll(second);
        Map<String, String> replay = ServiceTestSupport.replayFinals(config, prefix + "-tests", all);
        assertTrue(replay.keySet().containsAll(lines.keySet()));
        replay.keySet().retainAll(lines.keySet());
        ServiceTestSupport.assertSameEstimates(replay, lines);
    }

    @Test
    void aFileThatCannotBeWrittenDoesNotStopTheService() throws Exception {
        String prefix = "efile-bad";
        Path notAFolder = Files.writeString(dir.resolve("plain-file"), "x");
        MonitorConfig config = config(prefix, notAFolder.resolve("estimates.jsonl"));
        List<TestFeed.Event> events = sparse(300, Instant.parse("2026-01-05T00:00:00Z"), Duration.ofDays(60));
        ServiceTestSupport.produce(KAFKA, prefix + "-tests", events, true, true);
        SimpleMeterRegistry registry = runUntilCaughtUp(config, prefix, events.size());
        int finals = ServiceTestSupport.finals(KAFKA, prefix + "-estimates").size();
        assertTrue(finals > 0, "the estimates still reach the topic");
        // not only in the log: every line the file did not take is counted on /metrics
        assertEquals(finals, registry.get(OddswatchMeters.FILE_FAILURES).tag("monitor", "resp").functionCounter().count(),
                "one counted failure per final estimate the file did not take");
        assertEquals("x", Files.readString(notAFolder));
    }
}
