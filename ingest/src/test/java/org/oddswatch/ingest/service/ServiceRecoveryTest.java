package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * Restarts and hand-overs: the final estimates after a stop and start, or after one of two
 * instances leaves the group, equal those of one uninterrupted run over the same events. Idle
 * timeouts are set far out, so windows close only by the event-time watermark.
 */
class ServiceRecoveryTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final String NEVER = "P3650D";
    private static final Duration WAIT = Duration.ofSeconds(90);
    private static final String[] REGIONS = {"north", "south", "east", "west", "central", "coast"};
    private static List<TestFeed.Event> events;

    @BeforeAll
    static void feed() {
        events = TestFeed.events(23, 4000, Instant.parse("2026-01-05T00:00:00Z"), Duration.ofDays(150),
                Duration.ofHours(12), REGIONS);
    }

    /** One uninterrupted run over all events on a fresh input topic: the reference finals. */
    private static Map<String, String> uninterrupted(String prefix, int partitions) {
        String input = prefix + "-tests";
        createTopics(prefix, input, partitions);
        ServiceTestSupport.produce(KAFKA, input, events, true, true);
        MonitorConfig config = config(input, prefix, prefix + "-group");
        MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix).start();
        try (service) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
        }
        // After close the status keeps the final counts.
        assertEquals(events.size(), service.status().counts().outcome(Outcome.ACCEPTED), "all accepted");
        Map<String, String> finals = ServiceTestSupport.finals(KAFKA, prefix + "-estimates");
        assertTrue(finals.size() > 60, "the reference run closed windows of several streams: " + finals.size());
        return finals;
    }

    @Test
    void stopAndStartMidStreamGivesTheFinalsOfAnUninterruptedRun() throws Exception {
        Map<String, String> expected = uninterrupted("restart-ref", 3);

        String prefix = "restart";
        String input = prefix + "-tests";
        createTopics(prefix, input, 3);
        MonitorConfig config = config(input, prefix, prefix + "-group");
        int half = events.size() / 2;
        // Record timestamps are the event times, so the rebuild's offsets-for-times look-up has to
        // find the right place instead of falling back to the beginning.
        ServiceTestSupport.produce(KAFKA, input, events.subList(0, half), true, true);
        try (MonitorService first = new MonitorService(config, new SimpleMeterRegistry(), "first").start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
        }
        ServiceTestSupport.produce(KAFKA, input, events.subList(half, events.size()), true, true);
        MeterRegistry registry = new SimpleMeterRegistry();
        MonitorService second = new MonitorService(config, registry, "second").start();
        try (second) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
        }
        assertNull(second.failure());
        assertEquals(events.size() - half, second.status().counts().consumed(), "live records after restart");
        double reread = registry.get("oddswatch.service.records").tag("phase", "rebuild").counter().count();
        // Source: common practice, no source — the span (28 d width + 2 d lateness + 1 h margin) is
        // far shorter than the 75 days before the restart, so only part of the first half is re-read.
        assertTrue(reread > 0 && reread < half, "records re-read to rebuild state: " + reread);

        assertSameFinals(expected, ServiceTestSupport.finals(KAFKA, prefix + "-estimates"));
    }

    /** Under the classic group protocol (cooperative-sticky assignor) and the KIP-848 consumer protocol. */
    @ParameterizedTest
    @ValueSource(strings = {"classic", "consumer"})
    void whenOneOfTwoInstancesStopsTheOtherTakesOverWithTheSameResults(String protocol) throws Exception {
        Map<String, String> expected = uninterrupted("pair-ref-" + protocol, 4);

        String prefix = "pair-" + protocol;
        String input = prefix + "-tests";
        createTopics(prefix, input, 4);
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix,
                prefix + "-group", 8, NEVER).replace("  bootstrap.servers:", "  group.protocol: " + protocol
                + "\n  bootstrap.servers:"));
        int half = events.size() / 2;
        ServiceTestSupport.produce(KAFKA, input, events.subList(0, half), true, true);
        try (MonitorService a = new MonitorService(config, new SimpleMeterRegistry(), "a").start()) {
            try (MonitorService b = new MonitorService(config, new SimpleMeterRegistry(), "b").start()) {
                ServiceTestSupport.awaitTrue("both instances to own partitions and be ready", WAIT,
                        () -> a.ready() && b.ready() && !a.status().partitions().isEmpty()
                                && !b.status().partitions().isEmpty());
                ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
                Set<Integer> ofA = partitions(a);
                Set<Integer> ofB = partitions(b);
                assertFalse(ofA.stream().anyMatch(ofB::contains), "no partition owned twice: " + ofA + " " + ofB);
                assertEquals(4, ofA.size() + ofB.size());
            }
            // b has left the group; a takes over b's partitions, rebuilds them and goes on.
            ServiceTestSupport.produce(KAFKA, input, events.subList(half, events.size()), true, true);
            ServiceTestSupport.awaitTrue("a to own all partitions", WAIT, () -> a.ready() && partitions(a).size() == 4);
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            assertNull(a.failure());
        }
        Map<String, String> actual = ServiceTestSupport.finals(KAFKA, prefix + "-estimates");
        Set<String> streams = new TreeSet<>();
        actual.keySet().forEach(k -> streams.add(k.substring(0, k.indexOf('|'))));
        assertEquals(REGIONS.length, streams.size(), "every stream estimated: " + streams);
        assertSameFinals(expected, actual);
    }

    /**
     * Byte-identical final estimates. This holds because the rebuild re-reads one window step more
     * than the open windows need and the pipeline rounds warm starts to single precision: the first
     * window emitted after a rebuild starts its fit from the same point as in the uninterrupted run.
     */
    private static void assertSameFinals(Map<String, String> expected, Map<String, String> actual) {
        ServiceTestSupport.assertSameEstimates(expected, actual);
    }

    @Test
    void aNewGroupStartingAtTheLatestOffsetRebuildsFromTheWallClockAndEmitsOnlyNewFinals() throws Exception {
        Map<String, String> reference = uninterrupted("latest-ref", 3);

        String prefix = "latest";
        String input = prefix + "-tests";
        createTopics(prefix, input, 3);
        int half = events.size() / 2;
        // Stamped now (producer clock): the wall-clock look-back reaches every record of the first half.
        ServiceTestSupport.produce(KAFKA, input, events.subList(0, half), true, false);
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix,
                prefix + "-group", 8, NEVER).replace("  bootstrap.servers:", "  auto.offset.reset: latest\n  bootstrap.servers:"));
        MeterRegistry registry = new SimpleMeterRegistry();
        MonitorService service = new MonitorService(config, registry, "latest").start();
        try (service) {
            ServiceTestSupport.awaitTrue("ready", WAIT, service::ready);
            assertEquals(half, registry.get("oddswatch.service.records").tag("phase", "rebuild").counter().count(),
                    "the first half is re-read as state only");
            ServiceTestSupport.produce(KAFKA, input, events.subList(half, events.size()), true, false);
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
        }
        assertEquals(events.size() - half, service.status().counts().consumed(), "only the second half is live");
        Map<String, String> finals = ServiceTestSupport.finals(KAFKA, prefix + "-estimates");
        assertTrue(finals.size() > 20 && finals.size() < reference.size(), "finals after the start only: " + finals.size());
        for (Map.Entry<String, String> e : finals.entrySet()) {
            assertEquals(reference.get(e.getKey()), e.getValue(), "estimate " + e.getKey());
        }
    }

    @Test
    void aRestartDuringAnOpenAlertEpisodeNeitherForgetsNorRepeatsIt() throws Exception {
        // One stream; fixed baseline period of eight weeks; from April the household-contact odds
        // ratio rises by exp(1.5), about 4.5 times, and stays up.
        List<TestFeed.Event> drifting = TestFeed.events(31, 5000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(175), Duration.ofHours(6), Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north");
        List<String> expected = alertsOfRun("alerts-ref", drifting, -1);
        List<String> drift = expected.stream().filter(a -> a.contains("\"rule\":\"odds-ratio-drift\"")).toList();
        assertTrue(drift.size() >= 2, "the drift raises an episode that continues: " + expected);
        assertTrue(drift.get(0).contains("\"state\":\"raised\""), drift.get(0));
        // the CUSUM (risk against the baseline model) signals as well; its messages are compared too
        List<String> cusum = expected.stream().filter(a -> a.contains("\"rule\":\"bernoulli-cusum-up\"")).toList();
        assertTrue(cusum.size() >= 2 && cusum.get(0).contains("\"state\":\"raised\""), "CUSUM messages: " + cusum);

        // Stop after the episode was raised (mid-June), start again.
        int cut = (int) (drifting.size() * 0.9);
        List<String> restarted = new java.util.ArrayList<>();
        // The replay command in each alert names the run's own input topic.
        alertsOfRun("alerts-restart", drifting, cut).forEach(a -> restarted.add(a.replace("alerts-restart-tests",
                "alerts-ref-tests")));
        assertTrue(drift.get(0).contains("--topic alerts-ref-tests"), "replay command names the topic: " + drift.get(0));
        assertEquals(expected, restarted, "same alert messages, none repeated, none missing");
    }

    /** Runs the service over the events (stopping and starting again at {@code cut} when >= 0); the alerts topic. */
    private static List<String> alertsOfRun(String prefix, List<TestFeed.Event> feed, int cut) {
        String input = prefix + "-tests";
        createTopics(prefix, input, 1);
        // the drift rule and the default CUSUM
        String yaml = TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, input, null)
                .replace("cusum: {enabled: false}", "cusum: {}");
        MonitorConfig config = TestDefinitions.config(yaml);
        int first = cut < 0 ? feed.size() : cut;
        ServiceTestSupport.produce(KAFKA, input, feed.subList(0, first), false, true);
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-1").start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
        }
        if (cut >= 0) {
            List<String> before = new java.util.ArrayList<>();
            KAFKA.readAll(prefix + "-alerts", Duration.ofSeconds(30)).forEach(r -> before.add(new String(r.value(),
                    java.nio.charset.StandardCharsets.UTF_8)));
            List<String> drift = before.stream().filter(a -> a.contains("\"rule\":\"odds-ratio-drift\"")).toList();
            assertFalse(drift.isEmpty(), "an episode was raised before the stop");
            assertFalse(drift.get(drift.size() - 1).contains("\"state\":\"cleared\""), "and is still open");
            ServiceTestSupport.produce(KAFKA, input, feed.subList(cut, feed.size()), false, true);
            try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-2").start()) {
                ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            }
        }
        List<String> alerts = new java.util.ArrayList<>();
        for (var record : KAFKA.readAll(prefix + "-alerts", Duration.ofSeconds(30))) {
            alerts.add(new String(record.value(), java.nio.charset.StandardCharsets.UTF_8));
        }
        return alerts;
    }

    private static Set<Integer> partitions(MonitorService service) {
        Set<Integer> out = new TreeSet<>();
        service.status().partitions().forEach(p -> out.add(p.partition()));
        return out;
    }

    private static MonitorConfig config(String input, String prefix, String group) {
        return TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix, group, 8, NEVER));
    }

    private static void createTopics(String prefix, String input, int partitions) {
        KAFKA.createTopic(input, partitions);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
    }
}
