package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * What a CUSUM alert publishes: its window is whole buckets of the stream's grid (here days), never
 * an event's own time, and the counts its message and JSON name follow the small-cell rule.
 */
class CusumPublicationTest {

    private static final long T0 = Fixtures.start(0).toEpochMilli(); // a Monday, 00:00 UTC
    private static final long DAY = Duration.ofDays(1).toMillis();
    private static final WindowGeometry WEEKLY_BY_DAY = new WindowGeometry(7 * DAY, DAY, 0, 0);

    /** All-positive events at baseline risk 1/(1+e^3) from 10:17:03.250 on day 2, one a second. */
    private static List<Alert> signal(double limit, int events) {
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(new Guard(null, null, 0L), null, null,
                null, new Cusum(2.0, null, limit, null, null, null, null)), Fixtures.baseline(), null, WEEKLY_BY_DAY,
                SmallCellPolicy.DEFAULT);
        long first = T0 + 2 * DAY + 37_023_250L;
        for (int i = 0; i < events; i++) {
            engine.onEvent(first + 1000L * i, "e" + i, new double[] {1, 0, 0}, true);
        }
        // the final window ending at the end of day 3 reports the chart once
        return engine.onFinalEstimate(Fixtures.bareWindow(Instant.ofEpochMilli(T0 - 4 * DAY),
                Instant.ofEpochMilli(T0 + 3 * DAY)));
    }

    @Test
    void theAlertWindowIsTheBucketNotTheEventTimes() {
        // R = 2, p = 1/(1+e^3): each positive adds ln 2 - ln(1 + p) = 0.647, so the 4th crosses h = 2.
        List<Alert> alerts = signal(2.0, 4);
        assertEquals(1, alerts.size());
        Alert a = alerts.get(0);
        assertEquals(T0 + 2 * DAY, a.windowStart().toEpochMilli(), "start of the day of the first event");
        assertEquals(T0 + 3 * DAY, a.windowEnd().toEpochMilli(), "end of the final window (the day of the signalling event)");
        String json = Json.write(a);
        assertFalse(json.contains("10:17"), json);
    }

    @Test
    void smallExcursionCountsAreWithheldInTheMessage() {
        // 4 events: a small count, so the alert withholds its figures with them (the chart's value over
        // 4 positives would give their number back) and its message quotes neither
        Alert four = signal(2.0, 4).get(0);
        assertEquals(4, four.events());
        assertTrue(four.message().contains("on <5 events: the CUSUM log-likelihood ratio (cusum-log-likelihood-ratio)"
                + " and the other figures of this reading are withheld for small numbers (events from 1 to 4)"),
                four.message());
        assertFalse(four.message().contains("4 were positive"), four.message());
        assertFalse(four.message().contains(Format.stat(4 * (Math.log(2) - Math.log(1 + 1 / (1 + Math.exp(3)))))),
                four.message());

        // h = 2.6: the 5th positive crosses (5 x 0.647 = 3.23 > 2.6 > 4 x 0.647 = 2.59), 5 events shown.
        Alert five = signal(2.6, 5).get(0);
        assertEquals(5, five.events());
        assertTrue(five.message().contains("over the 5 events from the first event after the chart last stood at zero to the window's end, 5 were positive"),
                five.message());
    }

    @Test
    void thePublishedAlertWithholdsASmallEventCount() throws Exception {
        Alert four = signal(2.0, 4).get(0);
        JsonNode published = Json.mapper().readTree(PublishedAlert.json(four, SmallCellPolicy.DEFAULT));
        assertFalse(published.has("events"), published.toString());
        assertEquals("events", published.get("withheld").get(0).get("field").asText());
        assertEquals("events from 1 to 4", published.get("withheld").get(0).get("reason").asText());
        assertEquals(four.id(), published.get("id").asText());

        Alert five = signal(2.6, 5).get(0);
        assertEquals(Json.write(five), PublishedAlert.json(five, SmallCellPolicy.DEFAULT), "5 events: unchanged");
        // Read back on a restart, the withheld alert still restores its episode (events is not used).
        assertEquals(four.id(), Json.mapper().readValue(PublishedAlert.json(four, SmallCellPolicy.DEFAULT),
                Alert.class).id());
    }
}
