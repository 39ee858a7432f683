package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.DayOfWeek;
import java.time.Duration;
import java.time.Instant;
import java.time.ZoneOffset;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * The future rule on a real broker: a weekday-only feed (nothing on weekends, a three-week holiday)
 * with three events dated 2099 a few seconds apart in one stream. The live service keeps every
 * real event, rejects the three typos once the stream has moved on without them, and publishes
 * the same final estimates as a file replay of the same events, byte for byte.
 */
class ServiceGapsAndTyposTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Instant HOLIDAY_FROM = Instant.parse("2026-03-02T00:00:00Z");
    private static final Instant HOLIDAY_TO = Instant.parse("2026-03-23T00:00:00Z");
    /** A Saturday: the feed ends with a Friday, so no event is still waiting for evidence at its end. */
    private static final Instant END = Instant.parse("2026-05-23T00:00:00Z");

    @Test
    void aWeekdayFeedWithAHolidayAndTyposLosesNoValidEventAndEqualsReplay() {
        String prefix = "gaps";
        KAFKA.createTopic(prefix + "-tests", 3);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        List<TestFeed.Event> events = new ArrayList<>();
        for (TestFeed.Event e : TestFeed.events(17, 6000, Instant.parse("2026-01-05T00:00:00Z"), Duration.ofDays(140),
                Duration.ZERO, "north", "south", "west")) {
            DayOfWeek day = e.time().atZone(ZoneOffset.UTC).getDayOfWeek();
            boolean holiday = !e.time().isBefore(HOLIDAY_FROM) && e.time().isBefore(HOLIDAY_TO);
            if (day != DayOfWeek.SATURDAY && day != DayOfWeek.SUNDAY && !holiday && e.time().isBefore(END)) {
                events.add(e);
            }
        }
        int valid = events.size();
        for (int t = 0; t < 3; t++) {
            Instant typo = Instant.parse("2099-02-03T10:00:00Z").plusSeconds(3L * t);
            String json = "{\"id\":\"typo-" + t + "\",\"collectedAt\":\"" + typo + "\",\"result\":\"negative\","
                    + "\"region\":\"north\",\"exposure\":{\"household\":\"no\",\"travel\":\"no\"},\"ageBand\":\"40-64\"}";
            events.add(1000 + t, new TestFeed.Event("north", typo, json.getBytes(StandardCharsets.UTF_8)));
        }
        ServiceTestSupport.produce(KAFKA, prefix + "-tests", events, true);
        MonitorConfig config = TestDefinitions.config(
                TestDefinitions.yaml(KAFKA.bootstrapServers(), prefix, prefix + "-group", true, "PT2S"));
        Map<String, String> expected = ServiceTestSupport.replayFinals(config, prefix + "-tests", events);
        assertTrue(expected.size() > 30, "replay gives windows for three streams: " + expected.size());

        MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix).start();
        try (service) {
            ServiceTestSupport.awaitTrue("all final estimates", Duration.ofSeconds(90),
                    () -> ServiceTestSupport.finals(KAFKA, prefix + "-estimates").size() >= expected.size());
        }
        var counts = service.status().counts();
        assertEquals(valid + 3, counts.consumed());
        assertEquals(valid, counts.outcome(Outcome.ACCEPTED), "every event of the weekday feed is kept");
        assertEquals(3L, counts.reasons().get(RejectReason.TOO_FAR_IN_FUTURE), "the three typos, and only they");
        assertEquals(List.of("typo-0", "typo-1", "typo-2"), ServiceTestSupport.values(KAFKA, prefix + "-rejects").stream()
                .map(r -> ServiceTestSupport.tree(r.path("value").asText()).path("id").asText()).toList());
        ServiceTestSupport.assertSameEstimates(expected, ServiceTestSupport.finals(KAFKA, prefix + "-estimates"));
    }
}
