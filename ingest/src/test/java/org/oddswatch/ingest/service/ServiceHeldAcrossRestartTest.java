package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.time.DayOfWeek;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * A record held beyond its stream's time horizon (the first Monday event after a weekend) is in no
 * window yet, so the service must not commit past it: a restart then reads it again instead of
 * losing it. The finals after the restart equal a replay of all events, byte for byte.
 */
class ServiceHeldAcrossRestartTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    /** The Monday after the second weekend: its first event is held until more Monday events confirm it. */
    private static final Instant MONDAY = Instant.parse("2026-01-19T00:00:00Z");

    @Test
    void aHeldRecordIsNotCommittedPastAndSurvivesARestart() throws Exception {
        String prefix = "held";
        String input = prefix + "-tests";
        KAFKA.createTopic(input, 1);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        List<TestFeed.Event> before = new ArrayList<>();
        List<TestFeed.Event> after = new ArrayList<>();
        for (TestFeed.Event e : TestFeed.events(23, 4000, START, Duration.ofDays(56), Duration.ZERO, "north")) {
            DayOfWeek day = e.time().atZone(ZoneOffset.UTC).getDayOfWeek();
            if (day == DayOfWeek.SATURDAY || day == DayOfWeek.SUNDAY) {
                continue;
            }
            (e.time().isBefore(MONDAY) ? before : after).add(e);
        }
        before.add(after.remove(0)); // the first Monday event ends the first part: held when the service stops
        int held = before.size() - 1;
        // idle timeout far away: the wall clock must not release the held record in this test
        MonitorConfig config = TestDefinitions.config(
                TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix, prefix + "-group", 0, "PT1000H"));
        List<TestFeed.Event> all = new ArrayList<>(before);
        all.addAll(after);
        Map<String, String> expected = ServiceTestSupport.replayFinals(config, input, all);
        assertTrue(expected.size() >= 5, "replay gives final windows: " + expected.size());

        ServiceTestSupport.produce(KAFKA, input, before, true);
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-1").start()) {
            ServiceTestSupport.awaitTrue("the records before the held one committed", Duration.ofSeconds(60),
                    () -> committed(prefix + "-group", input) == held);
            Thread.sleep(3000); // several commit rounds: the commit must stay at the held record
            assertEquals(held, committed(prefix + "-group", input), "no commit past the held record");
        }
        ServiceTestSupport.produce(KAFKA, input, after, true);
        // the second run may go idle at the end of the feed: its idle timeout closes the last windows
        MonitorConfig closing = TestDefinitions.config(
                TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix, prefix + "-group", 0, "PT2S"));
        try (MonitorService service = new MonitorService(closing, new SimpleMeterRegistry(), prefix + "-2").start()) {
            ServiceTestSupport.awaitTrue("all final estimates", Duration.ofSeconds(90),
                    () -> ServiceTestSupport.finals(KAFKA, prefix + "-estimates").size() >= expected.size());
        }
        ServiceTestSupport.assertSameEstimates(expected, ServiceTestSupport.finals(KAFKA, prefix + "-estimates"));
        assertTrue(ServiceTestSupport.values(KAFKA, prefix + "-rejects").isEmpty(), "nothing rejected, nothing lost");
    }

    private static long committed(String group, String topic) {
        try (Admin admin = KAFKA.admin()) {
            OffsetAndMetadata c = admin.listConsumerGroupOffsets(group).partitionsToOffsetAndMetadata().get()
                    .get(new TopicPartition(topic, 0));
            return c == null ? -1 : c.offset();
        } catch (Exception e) {
            return -2;
        }
    }
}
