package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;

/** The CUSUM rule through the engine: order independence, signal arithmetic, per-window lifecycle, guard. */
class BernoulliCusumRuleTest {

    private static final long T0 = Fixtures.start(0).toEpochMilli();
    private static final long MINUTE = 60_000;
    private static final long HOUR = 60 * MINUTE;

    private record Ev(long time, String id, double[] row, boolean positive) {
    }

    private static AlertEngine engine(Cusum cusum, Guard guard) {
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(guard, null, null, null, cusum), Fixtures.baseline(),
                null);
    }

    private static Cusum cusum(Double up, Double down, double h, Integer clearAfter, Double clearFraction) {
        return new Cusum(up, down, h, clearAfter, clearFraction, null, null);
    }

    /** The final window ending at {@code end} (its start does not matter to the CUSUM). */
    private static List<Alert> window(AlertEngine e, long end) {
        return e.onFinalEstimate(Fixtures.bareWindow(Instant.ofEpochMilli(end - HOUR), Instant.ofEpochMilli(end)));
    }

    /** Events with baseline risk exp(-3 + 0.7 e + 0.1 a)/(...), positives far more often than expected from {@code from}. */
    private static List<Ev> events(int n, int shiftFrom, long seed) {
        Random rng = new Random(seed);
        List<Ev> out = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            double[] row = {1, rng.nextDouble() < 0.3 ? 1 : 0, 2 + rng.nextInt(6)};
            double p = i >= shiftFrom ? 0.25 : 0.07;
            // several events share a minute: ties are broken by id
            out.add(new Ev(T0 + (i / 3) * MINUTE, String.format("id-%05d", (i * 7919) % 100_000), row,
                    rng.nextDouble() < p));
        }
        return out;
    }

    /**
     * Feeds events in the given order and, every {@code closeEvery} events, finalises the six-hour
     * windows that ended at least one hour before the newest event.
     */
    private static List<String> feed(AlertEngine e, List<Ev> events, int closeEvery) {
        List<String> out = new ArrayList<>();
        long maxTime = Long.MIN_VALUE;
        long nextEnd = T0 + 6 * HOUR;
        int k = 0;
        for (Ev ev : events) {
            e.onEvent(ev.time, ev.id, ev.row, ev.positive);
            maxTime = Math.max(maxTime, ev.time);
            if (++k % closeEvery == 0) {
                for (; nextEnd <= maxTime - HOUR; nextEnd += 6 * HOUR) {
                    window(e, nextEnd).forEach(a -> out.add(Json.write(a)));
                }
            }
        }
        for (; nextEnd <= maxTime + 6 * HOUR; nextEnd += 6 * HOUR) {
            window(e, nextEnd).forEach(a -> out.add(Json.write(a)));
        }
        return out;
    }

    @Test
    void arrivalOrderAndClosingCadenceDoNotChangeTheAlerts() {
        List<Ev> events = events(6000, 3000, 5L);
        List<String> reference = feed(engine(cusum(null, null, 5.0, null, null), null), events, 6000);
        assertTrue(reference.size() >= 2, "the shift is signalled: " + reference.size());
        // shuffle within each half hour (arrival order within the allowed lateness), close in small steps
        List<Ev> shuffled = new ArrayList<>(events);
        Random rng = new Random(9);
        for (int from = 0; from < shuffled.size(); from += 90) {
            Collections.shuffle(shuffled.subList(from, Math.min(from + 90, shuffled.size())), rng);
        }
        assertEquals(reference, feed(engine(cusum(null, null, 5.0, null, null), null), shuffled, 37));
    }

    @Test
    void signalValueIsTheSumOfLogLikelihoodRatios() {
        // all positives at risk p: each adds ln R - ln(1 - p + R p)
        // Source: Steiner, Cook, Farewell & Treasure (2000), Biostatistics 1:441-452, the weight W_t of the
        // risk-adjusted CUSUM for y = 1
        AlertEngine e = engine(cusum(2.0, null, 4.0, null, null), new Guard(null, null, 0L));
        double[] row = {1, 0, 0};
        double p = 1 / (1 + Math.exp(3.0));
        double w = Math.log(2.0) - Math.log(1 - p + 2 * p);
        int needed = (int) Math.floor(4.0 / w) + 1;
        for (int i = 0; i < needed; i++) {
            e.onEvent(T0 + i, "x" + i, row, true);
        }
        List<Alert> alerts = window(e, T0 + HOUR);
        assertEquals(1, alerts.size());
        Alert a = alerts.get(0);
        assertEquals(BernoulliCusumRule.UP, a.rule());
        assertEquals(AlertState.RAISED, a.state());
        assertEquals(Measurement.CUSUM_LLR, a.measure());
        assertEquals(Measurement.Side.ABOVE, a.direction());
        assertEquals(needed * w, a.value(), 1e-9);
        assertEquals(needed * w, a.observed(), 1e-9);
        assertEquals(needed * w, a.evidence().cusum(), 1e-9);
        assertNull(a.baseline(), "a chart statistic has no baseline value");
        assertEquals(4.0, a.limit());
        assertEquals(2.0, a.clearLimit());
        assertEquals(needed, a.events());
        assertEquals(T0, a.windowStart().toEpochMilli(), "excursion starts at the first event after zero");
        assertEquals(T0 + HOUR, a.windowEnd().toEpochMilli(), "ends with the final window");
        assertTrue(a.message().contains(needed + " were positive against"), a.message());
        assertTrue(a.message().contains("Measured: the CUSUM log-likelihood ratio (cusum-log-likelihood-ratio) = "
                + Format.stat(needed * w) + ", above the limit 4.00; clears after 2 windows in a row without a signal,"
                + " each ending below 2.00."), a.message());
        // the chart restarted at zero
        assertEquals(0.0, e.cusumReadings().stream().filter(r -> r.rule().equals(BernoulliCusumRule.UP))
                .findFirst().orElseThrow().value());
    }

    @Test
    void oneMessagePerFinalWindowAndClearingOnlyAfterQuietWindowsBelowTheClearLimit() {
        // h = 2 and clear limit 1: 40 positives (each adds 0.647) signal ten times, all in one window
        AlertEngine e = engine(cusum(2.0, null, 2.0, 2, 0.5), new Guard(null, null, 0L));
        double[] row = {1, 0, 0};
        double p = 1 / (1 + Math.exp(3.0));
        double up = Math.log(2.0) - Math.log(1 + p);
        double down = -Math.log(1 + p);
        List<AlertState> states = new ArrayList<>();
        long t = T0;
        long end = T0;
        for (int i = 0; i < 40; i++) {
            e.onEvent(t++, "a" + i, row, true);
        }
        window(e, end += HOUR).forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED), states);
        // next window: 16 positives, four more signals -> one continuing
        t = end;
        for (int i = 0; i < 16; i++) {
            e.onEvent(t++, "b" + i, row, true);
        }
        window(e, end += HOUR).forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING), states);
        // a window without a signal that ends with the chart at or above the clear limit: no message, and
        // it breaks the run towards clearing. Two positives: 2 x 0.647 = 1.29 >= 1.
        t = end;
        e.onEvent(t++, "c0", row, true);
        e.onEvent(t++, "c1", row, true);
        assertTrue(2 * up >= 1.0 && 2 * up < 2.0);
        window(e, end += HOUR).forEach(a -> states.add(a.state()));
        // a quiet window back below the clear limit (negatives pull the chart down: 1.29 - 10 x 0.047 < 1)
        t = end;
        for (int i = 0; i < 10; i++) {
            e.onEvent(t++, "d" + i, row, false);
        }
        assertTrue(2 * up + 10 * down < 1.0);
        window(e, end += HOUR).forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING), states, "one quiet window does not clear");
        // a window without events for the chart says nothing and breaks the run as well
        window(e, end += HOUR).forEach(a -> states.add(a.state()));
        assertEquals(2, states.size());
        for (int w = 0; w < 2; w++) {
            t = end;
            for (int i = 0; i < 10; i++) {
                e.onEvent(t++, "e" + w + "-" + i, row, false);
            }
            List<Alert> alerts = window(e, end += HOUR);
            alerts.forEach(a -> states.add(a.state()));
            if (w == 1) {
                Alert cleared = alerts.get(0);
                assertEquals(Measurement.Side.WITHIN, cleared.direction());
                assertEquals(1.0, cleared.limit(), "a clearing reports the clear limit");
                assertTrue(cleared.value() < 1.0);
            }
        }
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING, AlertState.CLEARED), states);
    }

    @Test
    void downChartSignalsOnFewerPositivesThanExpected() {
        AlertEngine e = engine(cusum(null, 0.5, 3.0, null, null), new Guard(null, null, 0L));
        double[] row = {1, 1, 5}; // risk expit(-3 + 0.7 + 0.5) = 0.14
        for (int i = 0; i < 400; i++) {
            e.onEvent(T0 + i, "n" + i, row, false);
        }
        List<Alert> alerts = window(e, T0 + HOUR);
        assertEquals(BernoulliCusumRule.DOWN, alerts.get(0).rule());
        assertEquals("calibration", alerts.get(0).subject().term());
        assertTrue(alerts.get(0).message().contains("lower risk than the baseline expects"), alerts.get(0).message());
    }

    @Test
    void guardDelaysSignalsAndBaselinePeriodEventsAreSkipped() {
        double[] row = {1, 0, 0};
        AlertEngine guarded = engine(cusum(2.0, null, 2.0, null, null), new Guard(null, null, 30L));
        for (int i = 0; i < 29; i++) {
            guarded.onEvent(T0 + i, "g" + i, row, true);
        }
        assertEquals(0, window(guarded, T0 + HOUR).size(), "fewer than minEvents processed");
        guarded.onEvent(T0 + HOUR, "g29", row, true);
        assertEquals(1, window(guarded, T0 + 2 * HOUR).size());

        AlertEngine e = engine(cusum(2.0, null, 2.0, null, null), new Guard(null, null, 0L));
        long inBaseline = Instant.parse("2026-02-02T00:00:00Z").toEpochMilli();
        for (int i = 0; i < 50; i++) {
            e.onEvent(inBaseline + i, "b" + i, row, true);
        }
        assertEquals(0, window(e, inBaseline + HOUR).size());
    }

    @Test
    void perTermChartsWatchOnlyEventsWithTheIndicator() {
        Cusum perTerm = new Cusum(2.0, null, 2.0, null, null, List.of(TermLimits.of("household_contact")), null);
        AlertEngine e = engine(perTerm, new Guard(null, null, 0L));
        for (int i = 0; i < 30; i++) {
            e.onEvent(T0 + i, "h" + i, new double[] {1, 1, 0}, true);
        }
        List<Alert> alerts = window(e, T0 + HOUR);
        assertEquals(2, alerts.size(), "overall chart and the household_contact chart");
        assertTrue(alerts.stream().anyMatch(a -> a.subject().label().equals("household_contact=yes")));
        assertEquals(4, e.cusumReadings().size());
        AlertEngine unexposed = engine(perTerm, new Guard(null, null, 0L));
        for (int i = 0; i < 30; i++) {
            unexposed.onEvent(T0 + i, "u" + i, new double[] {1, 0, 0}, true);
        }
        assertTrue(window(unexposed, T0 + HOUR).stream().allMatch(a -> a.subject().term().equals("calibration")));
    }
}
