package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.exception.MathIllegalArgumentException;
import org.apache.commons.math3.stat.interval.ClopperPearsonInterval;
import org.apache.commons.math3.stat.interval.ConfidenceInterval;
import org.apache.commons.math3.stat.interval.WilsonScoreInterval;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

class BinomialIntervalTest {

    private static final CsvFixture R = CsvFixture.load("/reference/binomial-intervals.csv");

    @Test
    void newcombeWilsonAndClopperPearsonFor81Of263() {
        // Source: Newcombe 1998, Stat Med 17:857, Table I (from memory; see docs/references.md); reproduced by
        // R prop.test(81, 263, correct = FALSE) and binom.test(81, 263).
        BinomialInterval wilson = BinomialInterval.wilson(81, 263, 0.95);
        assertEquals(0.2553, wilson.lower(), 5e-5);
        assertEquals(0.3662, wilson.upper(), 5e-5);
        BinomialInterval exact = BinomialInterval.clopperPearson(81, 263, 0.95);
        assertEquals(0.2527, exact.lower(), 5e-5);
        assertEquals(0.3676, exact.upper(), 5e-5);
        assertEquals(81.0 / 263, wilson.estimate(), 0);
    }

    @Test
    void allMethodsAgreeWithRFixturesOverTheGrid() {
        // Source: fixture binomial-intervals.csv from src/test/reference/binomial_intervals.R
        // (R 4.2.2: prop.test(correct = FALSE), binom.test, qbeta); the fixture's first line names the version.
        assertTrue(R.comments().get(0).contains("R version 4.2.2"));
        assertTrue(R.size() > 200);
        for (int i = 0; i < R.size(); i++) {
            long n = (long) R.number(i, "n");
            long x = (long) R.number(i, "x");
            double level = R.number(i, "level");
            String where = x + "/" + n + " at " + level;
            check(BinomialInterval.wilson(x, n, level), R.number(i, "wilson_lower"), R.number(i, "wilson_upper"),
                    "wilson " + where);
            check(BinomialInterval.clopperPearson(x, n, level), R.number(i, "cp_lower"), R.number(i, "cp_upper"),
                    "clopper-pearson " + where);
            check(BinomialInterval.jeffreys(x, n, level), R.number(i, "jeffreys_lower"),
                    R.number(i, "jeffreys_upper"), "jeffreys " + where);
        }
    }

    @Test
    void agreesWithCommonsMathWhereCommonsMathAcceptsTheCounts() {
        // Source: Commons Math 3.6.1 WilsonScoreInterval and ClopperPearsonInterval over the fixture's grid.
        // Commons Math's Wilson bounds at x = 0 and x = n carry rounding (about 2e-17 and 1 - 2e-16), ours
        // are exactly 0 and 1; its Clopper-Pearson refuses x = 0 and x = n (an F distribution with 0
        // degrees of freedom), so those cells are checked against R only (previous test).
        int compared = 0;
        for (int i = 0; i < R.size(); i++) {
            int n = (int) R.number(i, "n");
            int x = (int) R.number(i, "x");
            double level = R.number(i, "level");
            ConfidenceInterval cmWilson = new WilsonScoreInterval().createInterval(n, x, level);
            BinomialInterval wilson = BinomialInterval.wilson(x, n, level);
            assertEquals(cmWilson.getLowerBound(), wilson.lower(), 1e-12, "wilson vs Commons Math " + x + "/" + n);
            assertEquals(cmWilson.getUpperBound(), wilson.upper(), 1e-12, "wilson vs Commons Math " + x + "/" + n);
            if (x > 0 && x < n) {
                ConfidenceInterval cmExact = new ClopperPearsonInterval().createInterval(n, x, level);
                // Commons Math's F quantiles use its default solver accuracy (1e-9 absolute).
                BinomialInterval ours = BinomialInterval.clopperPearson(x, n, level);
                assertEquals(cmExact.getLowerBound(), ours.lower(), 1e-8, "cp lower " + x + "/" + n);
                assertEquals(cmExact.getUpperBound(), ours.upper(), 1e-8, "cp upper " + x + "/" + n);
                compared++;
            } else {
                int fx = x;
                assertThrows(MathIllegalArgumentException.class,
                        () -> new ClopperPearsonInterval().createInterval(n, fx, level));
            }
        }
        assertTrue(compared > 150);
    }

    @Test
    void boundaryCountsGiveExactBoundsInsideTheUnitInterval() {
        for (BinomialIntervalMethod method : BinomialIntervalMethod.values()) {
            BinomialInterval none = BinomialInterval.of(method, 0, 40, 0.95);
            assertEquals(0.0, none.lower(), 0, method + " lower at x = 0");
            assertTrue(none.upper() > 0 && none.upper() < 1);
            BinomialInterval all = BinomialInterval.of(method, 40, 40, 0.95);
            assertEquals(1.0, all.upper(), 0, method + " upper at x = n");
            assertTrue(all.lower() > 0 && all.lower() < 1);
        }
        // Source: for x = 0 the Clopper-Pearson upper bound solves (1 - u)^n = alpha/2, u = 1 - (alpha/2)^(1/n)
        // (Clopper & Pearson 1934; closed form, common practice).
        assertEquals(1 - Math.pow(0.025, 1.0 / 40), BinomialInterval.clopperPearson(0, 40, 0.95).upper(), 1e-12);
    }

    @ParameterizedTest
    @EnumSource(BinomialIntervalMethod.class)
    void noTrialsGiveNoIntervalRatherThanNaN(BinomialIntervalMethod method) {
        BinomialInterval empty = BinomialInterval.of(method, 0, 0, 0.95);
        assertFalse(empty.isDefined());
        assertNull(empty.estimate());
        assertNull(empty.lower());
        assertNull(empty.upper());
    }

    @Test
    void higherLevelGivesWiderInterval() {
        for (BinomialIntervalMethod method : BinomialIntervalMethod.values()) {
            BinomialInterval narrow = BinomialInterval.of(method, 7, 50, 0.80);
            BinomialInterval wide = BinomialInterval.of(method, 7, 50, 0.99);
            assertTrue(wide.lower() < narrow.lower() && wide.upper() > narrow.upper(), method.label());
        }
    }

    @Test
    void rejectsImpossibleCountsAndLevels() {
        assertThrows(IllegalArgumentException.class, () -> BinomialInterval.wilson(5, 4, 0.95));
        assertThrows(IllegalArgumentException.class, () -> BinomialInterval.wilson(-1, 4, 0.95));
        assertThrows(IllegalArgumentException.class, () -> BinomialInterval.jeffreys(1, 4, 1.0));
        assertThrows(IllegalArgumentException.class, () -> BinomialInterval.jeffreys(1, 4, Double.NaN));
    }

    @Test
    void methodLabelsAreTheJsonLabels() {
        assertEquals(BinomialIntervalMethod.WILSON, BinomialIntervalMethod.fromLabel("wilson"));
        assertEquals(BinomialIntervalMethod.CLOPPER_PEARSON, BinomialIntervalMethod.fromLabel("clopper-pearson"));
        assertEquals(BinomialIntervalMethod.JEFFREYS, BinomialIntervalMethod.fromLabel("jeffreys"));
        assertEquals(BinomialIntervalMethod.WILSON, BinomialIntervalMethod.fromLabel(null));
        assertEquals("clopper-pearson", BinomialIntervalMethod.CLOPPER_PEARSON.toString());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> BinomialIntervalMethod.fromLabel("wald"));
        assertTrue(e.getMessage().contains("wilson, clopper-pearson, jeffreys"), e.getMessage());
    }

    /** 1e-12 absolute (measured worst case over the grid: 3e-16 Wilson, 3.5e-14 beta quantiles). */
    private static void check(BinomialInterval interval, double lower, double upper, String what) {
        assertEquals(lower, interval.lower(), 1e-12, what + " lower");
        assertEquals(upper, interval.upper(), 1e-12, what + " upper");
    }
}
