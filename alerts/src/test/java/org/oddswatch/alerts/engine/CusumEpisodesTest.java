package org.oddswatch.alerts.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * The default CUSUM over a high-volume stream with weekly final windows: 10,000 events a week whose
 * odds are 1.6 times the baseline model's from the first event after the baseline period through
 * week 8 and again in week 10 (week 9 in between, and weeks 11 on, follow the baseline model). Checks the message count per episode and window,
 * the hysteresis across the quiet week, and that a restart with a rebuild gives the uninterrupted
 * run's alerts byte for byte.
 */
class CusumEpisodesTest {

    private static final int WEEKS = 16;
    private static final int PER_WEEK = 10_000;
    private static final long WEEK = Fixtures.WEEK.toMillis();
    private static final long FIRST = Fixtures.FIRST_WINDOW.toEpochMilli();

    private record Ev(long time, String id, double[] row, boolean positive) {
    }

    private static boolean shifted(int week) {
        return week <= 8 || week == 10;
    }

    /** Events of week {@code week} (window ending {@code FIRST + (week + 1) WEEK}), seeded by the week. */
    private static List<Ev> week(int week) {
        BaselineModel model = Fixtures.baseline();
        SplittableRandom rng = new SplittableRandom(20260406L + week);
        List<Ev> out = new ArrayList<>(PER_WEEK);
        for (int j = 0; j < PER_WEEK; j++) {
            double[] row = {1, rng.nextDouble() < 0.3 ? 1 : 0, 2 + rng.nextInt(6)};
            double p = model.risk(row);
            double odds = p / (1 - p) * (shifted(week) ? 1.6 : 1.0);
            out.add(new Ev(FIRST + week * WEEK + j * (WEEK / PER_WEEK), "w" + week + "-" + j, row,
                    rng.nextDouble() < odds / (1 + odds)));
        }
        return out;
    }

    private static AlertEngine engine() {
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null, null,
                AlertRulesConfig.defaults().cusum()), Fixtures.baseline(), null);
    }

    /** Feeds weeks {@code from} to {@code to} (exclusive) as the pipeline does: events, then the week's final window. */
    private static List<Alert> feed(AlertEngine e, int from, int to) {
        List<Alert> out = new ArrayList<>();
        for (int w = from; w < to; w++) {
            for (Ev ev : week(w)) {
                e.onEvent(ev.time, ev.id, ev.row, ev.positive);
            }
            Instant start = Instant.ofEpochMilli(FIRST + w * WEEK);
            Instant end = Instant.ofEpochMilli(FIRST + (w + 1) * WEEK);
            out.addAll(e.onFinalEstimate(Fixtures.bareWindow(start, end)));
        }
        return out;
    }

    /** The final window (week index, ending at {@code FIRST + k WEEK}) a message belongs to: the first ending at or after it. */
    private static long windowOf(Alert a) {
        return Math.floorDiv(a.windowEnd().toEpochMilli() - FIRST + WEEK - 1, WEEK);
    }

    // The first version failed both tests: up to 5 messages of one episode in one weekly window (a
    // continuing message every 2,000 events), a clearing and a second raise around the quiet week 9,
    // and after a restart other signals reported as continuing (its message counter restarted at 0).
    @Test
    void atMostOneMessagePerEpisodeAndFinalWindowAndNoFlappingAcrossAQuietWeek() {
        List<Alert> alerts = feed(engine(), 0, WEEKS);
        Map<String, Integer> perEpisodeAndWindow = new HashMap<>();
        for (Alert a : alerts) {
            perEpisodeAndWindow.merge(a.id() + "@" + windowOf(a), 1, Integer::sum);
        }
        int most = Collections.max(perEpisodeAndWindow.values());
        assertEquals(1, most, "messages of one episode in one final window: " + perEpisodeAndWindow);
        List<Alert> up = alerts.stream().filter(a -> a.rule().equals("bernoulli-cusum-up")).toList();
        // the shift (weeks 0-8 and 10) is one episode: raised in the first window, continued, never
        // cleared and raised again in between, cleared only after week 10
        List<Alert> raised = up.stream().filter(a -> a.state() == AlertState.RAISED && windowOf(a) <= 12).toList();
        assertEquals(1, raised.size(), "raised messages of the upper chart: " + up.stream()
                .map(a -> a.state() + "@" + windowOf(a)).toList());
        assertEquals(1, windowOf(raised.get(0)), "raised in the shift's first window");
        Alert cleared = up.stream().filter(a -> a.state() == AlertState.CLEARED).findFirst().orElseThrow();
        assertEquals(raised.get(0).id(), cleared.id());
        assertTrue(windowOf(cleared) >= 13, "cleared two quiet windows after week 10, not before: " + windowOf(cleared));
    }

    @Test
    void restartWithRebuildGivesTheUninterruptedAlertsByteForByte() throws Exception {
        List<String> reference = feed(engine(), 0, WEEKS).stream().map(Json::write).toList();
        for (int stop : new int[] {6, 10, 11}) {
            AlertEngine before = engine();
            List<Alert> published = feed(before, 0, stop);
            // read back as from the alerts topic, in an order that is not time order (a topic keyed by
            // episode id spreads one chart's episodes over its partitions)
            List<Alert> readBack = new ArrayList<>();
            for (Alert a : published) {
                readBack.add(Json.mapper().readValue(Json.write(a), Alert.class));
            }
            Collections.reverse(readBack);
            AlertEngine after = engine();
            after.restore(readBack);
            // the rebuild re-reads every event since the baseline (fixed-period baseline): nothing is sent again
            assertEquals(List.of(), feed(after, 0, stop), "stopped after week " + stop);
            List<String> combined = new ArrayList<>(published.stream().map(Json::write).toList());
            feed(after, stop, WEEKS).forEach(a -> combined.add(Json.write(a)));
            assertEquals(reference, combined, "stopped after week " + stop);
        }
    }
}
