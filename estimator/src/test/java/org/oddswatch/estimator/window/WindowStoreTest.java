package org.oddswatch.estimator.window;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.HouseScenario;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.terms.DesignCoder;

class WindowStoreTest {

    private static final int WIDTH = 28;

    /** Per bucket, the generated events (seeded). */
    private static List<List<HouseScenario.Event>> days(long seed, int buckets, int perBucket, boolean numeric,
                                                        double missing) {
        HouseScenario scenario = new HouseScenario(seed, numeric, missing);
        List<List<HouseScenario.Event>> days = new ArrayList<>();
        for (int b = 0; b < buckets; b++) {
            List<HouseScenario.Event> day = new ArrayList<>();
            for (int k = 0; k < perBucket; k++) {
                day.add(scenario.next());
            }
            days.add(day);
        }
        return days;
    }

    private static WindowStore fill(DesignCoder coder, int limit, List<List<HouseScenario.Event>> days, int from,
                                    int to) {
        WindowStore store = new WindowStore(coder, limit, HouseScenario.REGION.size());
        double[] row = new double[coder.width()];
        for (int b = from; b < to; b++) {
            for (HouseScenario.Event e : days.get(b)) {
                HouseScenario.add(coder, store, b, e, row);
            }
        }
        return store;
    }

    private static FitResult fit(WindowData d, double[] start) {
        return NewtonFitter.fit(FitProblem.of(d.rows(), d.columns(), d.x(), d.trials(), d.positives()), start,
                FitControl.defaults());
    }

    @Test
    void fitAfterEachSlideEqualsAColdFitOnTheSameEvents() {
        DesignCoder coder = HouseScenario.coder(false);
        List<List<HouseScenario.Event>> days = days(11, 40, 300, false, 0.02);
        WindowStore live = fill(coder, 10_000, days, 0, WIDTH);
        double[] warm = fit(live.window(0, WIDTH), null).coefficients();
        double[] row = new double[coder.width()];
        for (int end = WIDTH + 1; end <= 40; end++) {
            for (HouseScenario.Event e : days.get(end - 1)) {
                HouseScenario.add(coder, live, end - 1, e, row);
            }
            live.expireBefore(end - WIDTH);
            FitResult slid = fit(live.window(end - WIDTH, end), warm);
            assertTrue(slid.warmStartUsed() && slid.converged());
            FitResult fresh = fit(fill(coder, 10_000, days, end - WIDTH, end).window(end - WIDTH, end), null);
            assertArrayEquals(fresh.coefficients(), slid.coefficients(), 1e-9, "window ending " + end);
            warm = slid.coefficients();
        }
        assertEquals(WIDTH, live.bucketCount());
        assertEquals(40 - WIDTH, live.oldestBucket());
        assertEquals(39, live.newestBucket());
    }

    @Test
    void patternCountsAndRowStorageGiveTheSameFit() {
        DesignCoder coder = HouseScenario.coder(false);
        List<List<HouseScenario.Event>> days = days(12, WIDTH, 200, false, 0);
        WindowData patterns = fill(coder, 10_000, days, 0, WIDTH).window(0, WIDTH);
        WindowStore rowStore = fill(coder, 0, days, 0, WIDTH);
        assertTrue(rowStore.isRowMode(0));
        WindowData rows = rowStore.window(0, WIDTH);
        assertTrue(patterns.rows() <= 160 && rows.rows() == WIDTH * 200);
        assertEquals(patterns.completeEvents(), rows.completeEvents());
        assertEquals(patterns.completePositives(), rows.completePositives());
        assertArrayEquals(fit(patterns, null).coefficients(), fit(rows, null).coefficients(), 1e-9);
        assertArrayEquals(fit(patterns, null).covariance()[1], fit(rows, null).covariance()[1], 1e-9);
    }

    @Test
    void aBucketSwitchesToRowsPastThePatternLimitAndKeepsEveryEvent() {
        DesignCoder coder = HouseScenario.coder(true);
        List<List<HouseScenario.Event>> days = days(13, 3, 500, true, 0);
        WindowStore store = fill(coder, 50, days, 0, 3);
        assertTrue(store.isRowMode(0));
        WindowData d = store.window(0, 3);
        assertEquals(1500, d.completeEvents());
        WindowData big = fill(coder, 100_000, days, 0, 3).window(0, 3);
        assertFalse(fill(coder, 100_000, days, 0, 3).isRowMode(0));
        assertArrayEquals(fit(big, null).coefficients(), fit(d, null).coefficients(), 1e-9);
    }

    @Test
    void prevalenceCountsIncludeIncompleteEvents() {
        DesignCoder coder = HouseScenario.coder(false);
        List<List<HouseScenario.Event>> days = days(14, 2, 1000, false, 0.1);
        WindowData d = fill(coder, 10_000, days, 0, 2).window(0, 2);
        long cases = days.stream().flatMap(List::stream).filter(HouseScenario.Event::positive).count();
        long complete = days.stream().flatMap(List::stream).filter(e -> e.raw()[2] != null).count();
        assertEquals(2000, d.events());
        assertEquals(cases, d.cases());
        assertEquals(complete, d.completeEvents());
        assertTrue(complete < 2000);
        long[] perRegion = new long[4];
        days.stream().flatMap(List::stream).forEach(e -> perRegion[HouseScenario.REGION.indexOf((String) e.raw()[3])]++);
        assertArrayEquals(perRegion, d.stratumEvents());
    }

    @Test
    void windowOrderDependsOnlyOnTheData() {
        DesignCoder coder = HouseScenario.coder(false);
        List<List<HouseScenario.Event>> days = days(15, 3, 400, false, 0);
        WindowData forward = fill(coder, 10_000, days, 0, 3).window(0, 3);
        List<List<HouseScenario.Event>> reversed = new ArrayList<>();
        for (List<HouseScenario.Event> day : days) {
            List<HouseScenario.Event> r = new ArrayList<>(day);
            java.util.Collections.reverse(r);
            reversed.add(r);
        }
        WindowData backward = fill(coder, 10_000, reversed, 0, 3).window(0, 3);
        assertArrayEquals(forward.x(), backward.x());
        assertArrayEquals(forward.trials(), backward.trials());
        assertArrayEquals(forward.positives(), backward.positives());
        assertArrayEquals(fit(forward, null).coefficients(), fit(backward, null).coefficients(), 0.0);
    }

    @Test
    void expiryDropsWholeBucketsAndEmptyRangesAreEmpty() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowStore store = fill(coder, 10_000, days(16, 5, 10, false, 0), 0, 5);
        store.expireBefore(3);
        assertEquals(3, store.oldestBucket());
        assertEquals(0, store.window(0, 3).events());
        assertEquals(20, store.window(0, 5).events());
        store.expireBefore(100);
        assertEquals(Long.MAX_VALUE, store.oldestBucket());
        assertEquals(Long.MIN_VALUE, store.newestBucket());
        WindowData empty = store.window(0, 5);
        assertEquals(0, empty.rows());
        assertEquals(0, empty.events());
    }

    @Test
    void badRowsAreRefusedWithoutChangingTheStore() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowStore store = new WindowStore(coder, 100, 4);
        double[] row = new double[coder.width()];
        row[0] = 1;
        row[1] = 0.5;
        assertThrows(IllegalArgumentException.class, () -> store.add(0, row, true, 0));
        assertThrows(IllegalArgumentException.class, () -> store.add(0, new double[3], true, 0));
        assertThrows(IllegalArgumentException.class, () -> store.add(0, null, true, 4));
        assertEquals(0, store.bucketCount());
    }

    @Test
    void rowStorageCostsAboutSixteenBytesPerEventWithOneNumericTerm() {
        DesignCoder coder = HouseScenario.coder(true);
        WindowStore store = fill(coder, 0, days(17, 4, 20_000, true, 0), 0, 4);
        double perEvent = (double) store.approximateBytes() / 80_000;
        // 8 bytes of indicator bits + 8 bytes for the numeric value + 1 outcome bit, plus growth slack.
        assertTrue(perEvent > 16 && perEvent < 25, "bytes per event " + perEvent);
        WindowStore patterns = fill(HouseScenario.coder(false), 10_000, days(17, 4, 20_000, false, 0), 0, 4);
        assertTrue((double) patterns.approximateBytes() / 80_000 < 1, "pattern mode is far below a byte per event");
    }
}
