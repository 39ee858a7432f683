package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.rules.OddsRatioCusumRule.ChartSettings;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;

/**
 * The shared buffer of the sequential rules: it delivers exactly the sequence a per-rule priority
 * queue ordered by (event time, id) delivered (the order each CUSUM rule kept before the buffer was
 * shared), to every reader, and two rules sharing one buffer read the same as each with its own.
 * Events arrive out of order within a lateness of three "days", some after their time was closed,
 * with ties in time broken by id (fixed seeds).
 */
class PendingEventsTest {

    private static final long DAY = 86_400_000L;

    private static BaselineModel baseline() {
        List<Column> cols = List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true),
                new Column("sex", "male", "female", null, false, true));
        return new BaselineModel(cols, new double[] {-2.4, 0.8, 0.1}, new double[][] {{0.002, 0, 0}, {0, 0.004, 0},
                {0, 0, 0.003}}, null, null, 20_000, 1_700, null);
    }

    /** One offered event: time, id, coded row (column 2 carries its arrival number, for telling events apart). */
    private record Offered(long time, String id, double[] row, boolean positive) {
    }

    /**
     * {@code days} days of events: time within the day plus up to three days' lateness in arrival,
     * ids of a small alphabet first (with the event's number after, as ids are unique after the
     * pipeline's de-duplication), so equal times are common and ordered by id; row {@code {1, x, n}}.
     */
    private static List<Offered> events(int days, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        List<Offered> arrivals = new ArrayList<>();
        List<long[]> order = new ArrayList<>();
        for (int i = 0; i < days * 150; i++) {
            long time = rng.nextLong(days * DAY) / 60_000L * 60_000L; // whole minutes: ties in time
            long arrival = time + rng.nextLong(3 * DAY);
            order.add(new long[] {arrival, i});
            double exposed = rng.nextDouble() < 0.3 ? 1 : 0;
            double eta = -2.4 + 0.8 * exposed;
            arrivals.add(new Offered(time, "e" + rng.nextInt(40) + "-" + i, new double[] {1, exposed, i},
                    rng.nextDouble() < 1 / (1 + Math.exp(-eta))));
        }
        order.sort(Comparator.comparingLong((long[] a) -> a[0]).thenComparingLong(a -> a[1]));
        List<Offered> out = new ArrayList<>();
        for (long[] o : order) {
            out.add(arrivals.get((int) o[1]));
        }
        return out;
    }

    /** An event as a reader received it. */
    private record Taken(long time, double marker, double eta, boolean positive) {
    }

    @Test
    void deliversThePriorityQueueOrderToEveryReaderAtEachClose() {
        BaselineModel model = baseline();
        PendingEvents buffer = new PendingEvents(model);
        List<Taken> first = new ArrayList<>();
        List<Taken> second = new ArrayList<>();
        buffer.register((time, row, eta, positive) -> first.add(new Taken(time, row[2], eta, positive)));
        buffer.register((time, row, eta, positive) -> second.add(new Taken(time, row[2], eta, positive)));
        // Source: java.util.PriorityQueue (JDK 17) with the comparator (time, then id) each rule used
        // before, drained while the head's time is before the closing time
        PriorityQueue<Offered> queue = new PriorityQueue<>(
                Comparator.comparingLong(Offered::time).thenComparing(Offered::id));
        List<Taken> expected = new ArrayList<>();

        List<Offered> events = events(20, 20261203L);
        long nextClose = DAY;
        for (Offered e : events) {
            // the arrival clock passes a day boundary: close the day two days before it, like a window
            // grid with two days' lateness (later arrivals of that day go with the next close)
            while (e.time() >= nextClose + 2 * DAY) {
                buffer.deliverBefore(nextClose);
                while (!queue.isEmpty() && queue.peek().time() < nextClose) {
                    Offered p = queue.poll();
                    expected.add(new Taken(p.time(), p.row()[2], model.linearPredictor(p.row()), p.positive()));
                }
                assertSameSequence(expected, first, "delivered before " + nextClose);
                nextClose += DAY;
            }
            buffer.add(e.time(), e.id(), e.row(), e.positive());
            queue.add(e);
        }
        buffer.deliverBefore(Long.MAX_VALUE);
        while (!queue.isEmpty()) {
            Offered p = queue.poll();
            expected.add(new Taken(p.time(), p.row()[2], model.linearPredictor(p.row()), p.positive()));
        }
        assertEquals(events.size(), first.size());
        assertSameSequence(expected, first, "first reader");
        assertSameSequence(expected, second, "second reader");
        assertEquals(0, buffer.held());
    }

    private static void assertSameSequence(List<Taken> expected, List<Taken> actual, String what) {
        for (int i = 0; i < Math.min(expected.size(), actual.size()); i++) {
            assertEquals(expected.get(i), actual.get(i), what + ": event " + i + " of " + expected.size());
        }
        assertEquals(expected.size(), actual.size(), what + ": events");
    }

    @Test
    void anEventAtTheClosingTimeStaysForTheNextCloseAndTheRowIsCopied() {
        PendingEvents buffer = new PendingEvents(baseline());
        List<Taken> taken = new ArrayList<>();
        buffer.register((time, row, eta, positive) -> taken.add(new Taken(time, row[2], eta, positive)));
        double[] row = {1, 1, 7};
        buffer.add(DAY, "b", row, true);
        buffer.add(DAY - 1, "z", new double[] {1, 0, 8}, false);
        buffer.add(DAY - 1, "a", new double[] {1, 0, 9}, false);
        buffer.add(DAY - 2, "a", new double[] {1, 0, 10}, false);
        buffer.add(DAY - 2, "a", new double[] {1, 0, 11}, false);
        row[2] = -1; // the caller reuses its array
        buffer.deliverBefore(DAY);
        // same time and id (not expected after de-duplication): arrival order
        assertEquals(List.of(10.0, 11.0, 9.0, 8.0), taken.stream().map(Taken::marker).toList());
        assertEquals(1, buffer.held());
        buffer.deliverBefore(DAY + 1);
        assertEquals(7.0, taken.get(4).marker());
        assertEquals(-2.4 + 0.8 + 0.7, taken.get(4).eta(), 1e-12);
        assertThrows(IllegalArgumentException.class, () -> buffer.add(DAY, "c", new double[] {1, 0}, true));
    }

    @Test
    void twoRulesSharingOneBufferReadAsEachWithItsOwn() {
        BaselineModel model = baseline();
        Cusum cusum = new Cusum(1.5, 0.6, 2.5, 2, 0.5, List.of(new TermLimits("household_contact", null, null, null,
                null, null)), null);
        InformationGuard guard = new InformationGuard(new Guard(null, null, 30L));
        List<ChartSettings> settings = List.of(new ChartSettings(0.4, 2.0));

        BernoulliCusumRule aloneBernoulli = new BernoulliCusumRule(cusum, guard, model);
        OddsRatioCusumRule aloneScore = new OddsRatioCusumRule(model, List.of(1), settings, guard, 2, 0.5);
        PendingEvents shared = new PendingEvents(model);
        BernoulliCusumRule sharedBernoulli = new BernoulliCusumRule(cusum, guard, model, null,
                org.oddswatch.alerts.privacy.SmallCellPolicy.DEFAULT, shared);
        OddsRatioCusumRule sharedScore = new OddsRatioCusumRule(model, List.of(1), settings, guard, 2, 0.5, shared);

        long nextReport = DAY;
        int readings = 0;
        int beyond = 0;
        for (Offered e : events(40, 7L)) {
            while (e.time() >= nextReport + 2 * DAY) {
                Instant end = Instant.ofEpochMilli(nextReport);
                // the engine's order: the odds-ratio rule reports first, then the Bernoulli rule
                List<Reading> score = sharedScore.report(end);
                List<Reading> bernoulli = sharedBernoulli.report(end);
                assertEquals(aloneScore.report(end), score);
                assertEquals(aloneBernoulli.report(end), bernoulli);
                assertEquals(aloneBernoulli.reportedValues(), sharedBernoulli.reportedValues());
                readings += score.size() + bernoulli.size();
                beyond += (int) bernoulli.stream().filter(r -> r.zone() == Zone.BEYOND).count();
                nextReport += DAY;
            }
            aloneBernoulli.offer(e.time(), e.id(), e.row(), e.positive());
            aloneScore.offer(e.time(), e.id(), e.row(), e.positive());
            shared.add(e.time(), e.id(), e.row(), e.positive());
        }
        assertEquals(aloneBernoulli.readings(), sharedBernoulli.readings());
        assertTrue(readings > 150, "readings compared: " + readings);
        assertTrue(beyond > 0, "the comparison includes signals");
    }
}
