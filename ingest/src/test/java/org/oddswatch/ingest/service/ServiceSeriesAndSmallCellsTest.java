package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.StreamStatus;

/**
 * On the embedded broker: a stream's series leave an instance's registry when a second instance
 * joins and takes its partition, and the estimates topic withholds small cells exactly as the
 * replay's {@code estimates.jsonl} does.
 */
class ServiceSeriesAndSmallCellsTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(90);
    private static final String NEVER = "P3650D";
    private static final String[] REGIONS = {"north", "south", "east", "west", "central", "coast"};

    /** Creates the input ({@code prefix-tests}) and output topics, produces the events keyed by region. */
    private static MonitorConfig topicsWith(String prefix, int partitions, List<TestFeed.Event> events) {
        String input = prefix + "-tests";
        KAFKA.createTopic(input, partitions);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        ServiceTestSupport.produce(KAFKA, input, events, true, true);
        return TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix, prefix + "-group", 8,
                NEVER));
    }

    /** Streams with a series in the registry (the unrouted {@code none} left out). */
    private static Set<String> streamsWithSeries(MeterRegistry registry) {
        Set<String> out = new TreeSet<>();
        for (Meter m : registry.getMeters()) {
            String stream = m.getId().getTag("stream");
            if (stream != null && !stream.equals(OddswatchMeters.NONE)) {
                out.add(stream);
            }
        }
        return out;
    }

    /** Streams the instance's pipelines hold now. */
    private static Set<String> held(MonitorService service) {
        Set<String> out = new TreeSet<>();
        for (PipelineSnapshot input : service.status().inputs()) {
            for (StreamStatus stream : input.streams()) {
                out.add(stream.stream());
            }
        }
        return out;
    }

    @Test
    void aStreamsSeriesLeaveWithItsPartition() {
        String prefix = "series";
        List<TestFeed.Event> events = TestFeed.events(31, 3000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(120), Duration.ofHours(12), REGIONS);
        MonitorConfig config = topicsWith(prefix, 4, events);
        String input = prefix + "-tests";
        MeterRegistry registryA = new SimpleMeterRegistry();
        MeterRegistry registryB = new SimpleMeterRegistry();
        try (MonitorService a = new MonitorService(config, registryA, "a").start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            assertEquals(Set.of(REGIONS).size(), streamsWithSeries(registryA).size(), "a alone holds every stream");
            try (MonitorService b = new MonitorService(config, registryB, "b").start()) {
                ServiceTestSupport.awaitTrue("both instances to own partitions and be ready", WAIT,
                        () -> a.ready() && b.ready() && !a.status().partitions().isEmpty()
                                && !b.status().partitions().isEmpty());
                Set<String> ofA = held(a);
                Set<String> seriesOfA = streamsWithSeries(registryA);
                assertTrue(ofA.containsAll(seriesOfA), "a shows only streams it holds: " + seriesOfA + " held " + ofA);
                assertTrue(seriesOfA.size() < REGIONS.length, "the streams handed to b left a: " + seriesOfA);
                assertFalse(seriesOfA.isEmpty());
                assertTrue(held(b).containsAll(streamsWithSeries(registryB)), "b shows only streams it holds");
                assertNull(a.failure());
                assertNull(b.failure());
            }
        }
    }

    @Test
    void theEstimatesTopicWithholdsSmallCellsAsTheReplayDoes() {
        String prefix = "cells";
        String input = prefix + "-tests";
        // About 31 events per 28-day window and stream (one every 21.6 hours, within the one-day
        // future skew), of which roughly one in six positive: many windows have 1 to 4 positives.
        List<TestFeed.Event> events = TestFeed.events(47, 1000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(150), Duration.ZERO, REGIONS);
        MonitorConfig config = topicsWith(prefix, 1, events);
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix).start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            assertNull(service.failure());
            assertEquals(events.size(), service.status().counts().outcome(Outcome.ACCEPTED), "all accepted");
        }
        Map<String, String> live = ServiceTestSupport.finals(KAFKA, prefix + "-estimates");
        int withheld = 0;
        for (String json : live.values()) {
            JsonNode e = ServiceTestSupport.tree(json);
            if (e.has("withheld")) {
                withheld++;
                assertFalse(e.has("cases") && e.has("prevalence"), json);
            } else {
                long cases = e.get("cases").asLong();
                long negatives = e.get("events").asLong() - cases;
                assertFalse(cases > 0 && cases < 5 || negatives > 0 && negatives < 5, "a small cell shown: " + json);
            }
        }
        assertTrue(withheld > 0, "some windows have small cells: " + withheld + " of " + live.size());
        // The replay of the same events writes the same lines (it closes the windows the live run
        // still holds open, so compare the windows both have).
        Map<String, String> replay = ServiceTestSupport.replayFinals(config, input, events);
        assertTrue(replay.keySet().containsAll(live.keySet()));
        replay.keySet().retainAll(live.keySet());
        ServiceTestSupport.assertSameEstimates(replay, live);
    }
}
