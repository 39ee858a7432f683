package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.broker.TestBroker;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * Live service against a real broker versus a file replay of the same events: the final estimates
 * must be the same JSON, byte for byte.
 */
class ServiceEndToEndTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    @Test
    void finalEstimatesOnTheTopicEqualThoseOfAFileReplay() throws Exception {
        runAgainst(KAFKA, "e2e");
    }

    /** The whole check against any broker (also used by the container variant). */
    static void runAgainst(TestBroker broker, String prefix) {
        // Three regions over three partitions, keyed by region: one stream per region.
        broker.createTopic(prefix + "-tests", 3);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            broker.createTopic(prefix + out, 1);
        }
        List<TestFeed.Event> events = TestFeed.events(11, 3000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(140), Duration.ofHours(12), "north", "south", "west");
        ServiceTestSupport.produce(broker, prefix + "-tests", events, true);
        // A short idle timeout: once the feed is consumed, quiet streams close their windows, as the
        // end of a replay does.
        MonitorConfig config = TestDefinitions.config(
                TestDefinitions.yaml(broker.bootstrapServers(), prefix, prefix + "-group", true, "PT2S"));
        Map<String, String> expected = ServiceTestSupport.replayFinals(config, prefix + "-tests", events);
        assertTrue(expected.size() > 40, "replay gives windows for three streams: " + expected.size());

        MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix).start();
        try (service) {
            ServiceTestSupport.awaitTrue("all final estimates", Duration.ofSeconds(90),
                    () -> ServiceTestSupport.finals(broker, prefix + "-estimates").size() >= expected.size());
            assertTrue(service.ready());
        }
        var counts = service.status().counts();
        assertEquals(3000, counts.consumed());
        assertEquals(3000, counts.outcome(Outcome.ACCEPTED), "every event valid and in time");
        ServiceTestSupport.assertSameEstimates(expected, ServiceTestSupport.finals(broker, prefix + "-estimates"));
    }
}
