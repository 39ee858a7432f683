package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

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

/** The CUSUM rule through the engine: order independence, signal arithmetic, lifecycle, guard. */
class BernoulliCusumRuleTest {

    private static final long T0 = Fixtures.start(0).toEpochMilli();
    private static final long MINUTE = 60_000;

    private record Ev(long time, String id, double[] row, boolean positive) {
    }

    private static AlertEngine engine(Cusum cusum, Guard guard) {
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(guard, null, null, null, cusum), Fixtures.baseline(),
                null);
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

    private static List<String> feed(AlertEngine e, List<Ev> events, int closeEvery) {
        List<String> out = new ArrayList<>();
        long maxTime = Long.MIN_VALUE;
        int k = 0;
        for (Ev ev : events) {
            e.onEvent(ev.time, ev.id, ev.row, ev.positive);
            maxTime = Math.max(maxTime, ev.time);
            if (++k % closeEvery == 0) {
                // close everything that cannot arrive any more: at least one hour behind the newest event
                e.onEventsClosed(maxTime - 60 * MINUTE).forEach(a -> out.add(Json.write(a)));
            }
        }
        e.onEventsClosed(Long.MAX_VALUE).forEach(a -> out.add(Json.write(a)));
        return out;
    }

    @Test
    void arrivalOrderAndClosingCadenceDoNotChangeTheAlerts() {
        List<Ev> events = events(6000, 3000, 5L);
        List<String> reference = feed(engine(new Cusum(null, null, 5.0, 500L, null, null), null), events, 6000);
        assertTrue(reference.size() >= 2, "the shift is signalled: " + reference.size());
        // shuffle within each half hour (arrival order within the allowed lateness), close in small steps
        List<Ev> shuffled = new ArrayList<>(events);
        Random rng = new Random(9);
        for (int from = 0; from < shuffled.size(); from += 90) {
            Collections.shuffle(shuffled.subList(from, Math.min(from + 90, shuffled.size())), rng);
        }
        assertEquals(reference, feed(engine(new Cusum(null, null, 5.0, 500L, null, null), null), shuffled, 37));
    }

    @Test
    void signalValueIsTheSumOfLogLikelihoodRatios() {
        // all positives at risk p: each adds ln R - ln(1 - p + R p)
        AlertEngine e = engine(new Cusum(2.0, null, 4.0, 100L, null, null), new Guard(null, null, 0L));
        double[] row = {1, 0, 0};
        double p = 1 / (1 + Math.exp(3.0));
        double w = Math.log(2.0) - Math.log(1 - p + 2 * p);
        int needed = (int) Math.floor(4.0 / w) + 1;
        for (int i = 0; i < needed; i++) {
            e.onEvent(T0 + i, "x" + i, row, true);
        }
        List<Alert> alerts = e.onEventsClosed(Long.MAX_VALUE);
        assertEquals(1, alerts.size());
        Alert a = alerts.get(0);
        assertEquals(BernoulliCusumRule.UP, a.rule());
        assertEquals(AlertState.RAISED, a.state());
        assertEquals(needed * w, a.observed(), 1e-9);
        assertEquals(needed * w, a.evidence().cusum(), 1e-9);
        assertEquals(4.0, a.limit());
        assertEquals(needed, a.events());
        assertEquals(T0, a.windowStart().toEpochMilli(), "excursion starts at the first event after zero");
        assertEquals(T0 + needed, a.windowEnd().toEpochMilli(), "ends just after the signalling event");
        assertTrue(a.message().contains(needed + " were positive against"), a.message());
        // the chart restarted at zero
        assertEquals(0.0, e.cusumReadings().stream().filter(r -> r.rule().equals(BernoulliCusumRule.UP))
                .findFirst().orElseThrow().value());
    }

    @Test
    void resignalsAreThrottledAndTheEpisodeClearsAfterQuietEvents() {
        AlertEngine e = engine(new Cusum(2.0, null, 2.0, 50L, null, null), new Guard(null, null, 0L));
        double[] row = {1, 0, 0};
        List<AlertState> states = new ArrayList<>();
        long t = T0;
        // 40 positives in a row (each adds 0.647, h = 2): a signal every 4 events, only the first is published
        for (int i = 0; i < 40; i++) {
            e.onEvent(t++, "a" + i, row, true);
        }
        e.onEventsClosed(t).forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED), states);
        // 16 more: the signal at event 56 comes 52 events after the last message -> one continuing
        for (int i = 0; i < 16; i++) {
            e.onEvent(t++, "b" + i, row, true);
        }
        e.onEventsClosed(t).forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING), states);
        // negatives only: no signal for 50 events -> cleared, once
        for (int i = 0; i < 120; i++) {
            e.onEvent(t++, "c" + i, row, false);
        }
        List<Alert> last = e.onEventsClosed(t);
        last.forEach(a -> states.add(a.state()));
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING, AlertState.CLEARED), states);
        assertEquals(50, last.get(0).events());
    }

    @Test
    void downChartSignalsOnFewerPositivesThanExpected() {
        AlertEngine e = engine(new Cusum(null, 0.5, 3.0, null, null, null), new Guard(null, null, 0L));
        double[] row = {1, 1, 5}; // risk expit(-3 + 0.7 + 0.5) = 0.14
        for (int i = 0; i < 400; i++) {
            e.onEvent(T0 + i, "n" + i, row, false);
        }
        List<Alert> alerts = e.onEventsClosed(Long.MAX_VALUE);
        assertEquals(BernoulliCusumRule.DOWN, alerts.get(0).rule());
        assertEquals("calibration", alerts.get(0).subject().term());
    }

    @Test
    void guardDelaysSignalsAndBaselinePeriodEventsAreSkipped() {
        double[] row = {1, 0, 0};
        AlertEngine guarded = engine(new Cusum(2.0, null, 2.0, null, null, null), new Guard(null, null, 30L));
        for (int i = 0; i < 29; i++) {
            guarded.onEvent(T0 + i, "g" + i, row, true);
        }
        assertEquals(0, guarded.onEventsClosed(Long.MAX_VALUE).size(), "fewer than minEvents processed");
        guarded.onEvent(T0 + 29, "g29", row, true);
        assertEquals(1, guarded.onEventsClosed(Long.MAX_VALUE).size());

        AlertEngine e = engine(new Cusum(2.0, null, 2.0, null, null, null), new Guard(null, null, 0L));
        long inBaseline = java.time.Instant.parse("2026-02-02T00:00:00Z").toEpochMilli();
        for (int i = 0; i < 50; i++) {
            e.onEvent(inBaseline + i, "b" + i, row, true);
        }
        assertEquals(0, e.onEventsClosed(Long.MAX_VALUE).size());
    }

    @Test
    void perTermChartsWatchOnlyEventsWithTheIndicator() {
        AlertEngine e = engine(new Cusum(2.0, null, 2.0, null, List.of(TermLimits.of("household_contact")), null),
                new Guard(null, null, 0L));
        for (int i = 0; i < 30; i++) {
            e.onEvent(T0 + i, "h" + i, new double[] {1, 1, 0}, true);
        }
        List<Alert> alerts = e.onEventsClosed(Long.MAX_VALUE);
        assertEquals(2, alerts.size(), "overall chart and the household_contact chart");
        assertTrue(alerts.stream().anyMatch(a -> a.subject().label().equals("household_contact=yes")));
        assertEquals(4, e.cusumReadings().size());
        AlertEngine unexposed = engine(new Cusum(2.0, null, 2.0, null, List.of(TermLimits.of("household_contact")),
                null), new Guard(null, null, 0L));
        for (int i = 0; i < 30; i++) {
            unexposed.onEvent(T0 + i, "u" + i, new double[] {1, 0, 0}, true);
        }
        assertTrue(unexposed.onEventsClosed(Long.MAX_VALUE).stream().allMatch(a -> a.subject().term().equals("calibration")));
    }
}
