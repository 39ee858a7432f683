package org.oddswatch.estimator.calibration;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.prevalence.CsvFixture;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.window.WindowData;

class CalibrationStatisticsTest {

    private static final CsvFixture R = CsvFixture.load("/reference/calibration-expected.csv");

    @Test
    void agreesWithRFixtures() {
        // Source: calibration-expected.csv from src/test/reference/calibration.R (R 4.2.2: glm with offset and
        // on the linear predictor, poisson.test, pchisq, mid-rank AUC; Hosmer-Lemeshow grouping coded in R).
        assertTrue(R.comments().get(0).contains("R version 4.2.2"));
        assertEquals(4, R.size());
        for (int i = 0; i < R.size(); i++) {
            String name = R.text(i, "dataset");
            String what = name + " at " + R.text(i, "level");
            CalibrationEstimate c = CalibrationStatistics.compute(CalibrationFixtures.data(name),
                    CalibrationFixtures.baseline(name), R.number(i, "level"));
            assertEquals((long) R.number(i, "events"), c.events(), what);
            assertEquals((long) R.number(i, "observed"), c.observed(), what);
            relative(R.number(i, "expected"), c.expected(), 1e-12, what + " expected");
            relative(R.number(i, "oe"), c.observedExpected(), 1e-12, what + " O/E");
            relative(R.number(i, "oe_lower"), c.oeLower(), 1e-9, what + " O/E lower");
            relative(R.number(i, "oe_upper"), c.oeUpper(), 1e-9, what + " O/E upper");
            assertEquals(R.number(i, "intercept"), c.intercept(), 1e-8, what + " intercept");
            relative(R.number(i, "intercept_se"), c.interceptSe(), 1e-6, what + " intercept se");
            assertEquals(R.number(i, "slope"), c.slope(), 1e-8, what + " slope");
            relative(R.number(i, "slope_se"), c.slopeSe(), 1e-6, what + " slope se");
            assertEquals((int) R.number(i, "hl_groups"), c.hosmerLemeshowGroups(), what + " HL groups");
            relative(R.number(i, "hl"), c.hosmerLemeshow(), 1e-10, what + " HL");
            relative(R.number(i, "hl_p"), c.hosmerLemeshowP(), 1e-8, what + " HL p");
            relative(R.number(i, "brier"), c.brier(), 1e-12, what + " Brier");
            relative(R.number(i, "c"), c.cStatistic(), 1e-12, what + " c");
        }
    }

    @Test
    void groupedPatternsAndSingleEventRowsGiveTheSameCalibration() {
        WindowData grouped = CalibrationFixtures.data("rare");
        BaselineModel baseline = CalibrationFixtures.baseline("rare");
        CalibrationEstimate a = CalibrationStatistics.compute(grouped, baseline, 0.95);
        CalibrationEstimate b = CalibrationStatistics.compute(CalibrationFixtures.expanded(grouped), baseline, 0.95);
        assertEquals(a.events(), b.events());
        assertEquals(a.hosmerLemeshowGroups(), b.hosmerLemeshowGroups());
        assertEquals(a.expected(), b.expected(), 1e-9);
        assertEquals(a.intercept(), b.intercept(), 1e-9);
        assertEquals(a.slope(), b.slope(), 1e-9);
        assertEquals(a.slopeSe(), b.slopeSe(), 1e-9);
        assertEquals(a.hosmerLemeshow(), b.hosmerLemeshow(), 1e-9);
        assertEquals(a.brier(), b.brier(), 1e-12);
        assertEquals(a.cStatistic(), b.cStatistic(), 1e-12);
    }

    @Test
    void tiedRisksStayTiedWhenTheLinearPredictorIsSummedInAnotherOrder() {
        // The patterns dataset has risks that are tied in exact arithmetic (-2 + 0.6 + 0.1 = -2 + 0.7, travel
        // with age band 2 against age band 5; 0.8 + 0.1 = 0.6 + 0.3, ...). Summing x.beta over the columns
        // in reverse order changes such linear predictors in the last bit, as an optimized BLAS does in R.
        WindowData data = CalibrationFixtures.data("patterns");
        double[] beta = CalibrationFixtures.baseline("patterns").coefficients();
        int p = data.columns();
        int n = data.rows();
        double[] x = new double[n * p];
        double[] reversedBeta = new double[p];
        for (int j = 0; j < p; j++) {
            reversedBeta[j] = beta[p - 1 - j];
            for (int i = 0; i < n; i++) {
                x[i * p + j] = data.x()[i * p + p - 1 - j];
            }
        }
        double[] forwardEta = new double[n];
        double[] reversedEta = new double[n];
        int differ = 0;
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < p; j++) {
                forwardEta[i] += data.x()[i * p + j] * beta[j];
                reversedEta[i] += x[i * p + j] * reversedBeta[j];
            }
            differ += forwardEta[i] == reversedEta[i] ? 0 : 1;
        }
        assertTrue(differ > 0, "the reversed sum changes some linear predictor in the last bit");
        CalibrationEstimate reversed = CalibrationStatistics.compute(
                CalibrationFixtures.window(p, x, data.trials(), data.positives()),
                CalibrationFixtures.baseline(reversedBeta), 0.95);
        int row = 0;
        // Source: calibration-expected.csv (calibration.R, R 4.2.2, risks tied within the same tolerance);
        // exact rational arithmetic on the decimal coefficients (Python fractions, checked once by hand)
        // gives the same: 34 distinct risks among the 40 patterns, HL 29.2229161181865, c 0.689907848903468.
        assertEquals((int) R.number(row, "hl_groups"), reversed.hosmerLemeshowGroups());
        relative(R.number(row, "hl"), reversed.hosmerLemeshow(), 1e-10, "HL");
        relative(R.number(row, "c"), reversed.cStatistic(), 1e-12, "c");
    }

    @Test
    void rowOrderDoesNotChangeTheResult() {
        WindowData data = CalibrationFixtures.data("patterns");
        int p = data.columns();
        int n = data.rows();
        double[] x = new double[n * p];
        double[] t = new double[n];
        double[] y = new double[n];
        for (int i = 0; i < n; i++) {
            int from = n - 1 - i;
            System.arraycopy(data.x(), from * p, x, i * p, p);
            t[i] = data.trials()[from];
            y[i] = data.positives()[from];
        }
        BaselineModel baseline = CalibrationFixtures.baseline("patterns");
        CalibrationEstimate forward = CalibrationStatistics.compute(data, baseline, 0.95);
        CalibrationEstimate reversed = CalibrationStatistics.compute(CalibrationFixtures.window(p, x, t, y), baseline,
                0.95);
        assertEquals(forward.hosmerLemeshow(), reversed.hosmerLemeshow(), 1e-12);
        assertEquals(forward.cStatistic(), reversed.cStatistic(), 1e-15);
        assertEquals(forward.slope(), reversed.slope(), 1e-10);
    }

    @Test
    void twoPatternsGiveTwoGroupsAndNoPValue() {
        // Two patterns (contact no / yes), baseline risks 0.1 and 0.3. Source: hand calculation of
        // sum (O - E)^2 / (E (1 - E/n)) with one group per pattern (Hosmer & Lemeshow, from memory):
        // no:  n = 100, O = 14, E = 10, var = 9  -> 16/9;  yes: n = 50, O = 12, E = 15, var = 10.5 -> 9/10.5.
        double lo = Math.log(0.1 / 0.9);
        double hi = Math.log(0.3 / 0.7);
        WindowData data = CalibrationFixtures.window(2, new double[] {1, 0, 1, 1}, new double[] {100, 50},
                new double[] {14, 12});
        List<String> notes = new ArrayList<>();
        CalibrationEstimate c = CalibrationStatistics.compute(data, CalibrationFixtures.baseline(lo, hi - lo), 0.95,
                FitControl.defaults(), notes::add);
        assertEquals(2, c.hosmerLemeshowGroups());
        assertEquals(16.0 / 9 + 9 / 10.5, c.hosmerLemeshow(), 1e-9);
        assertNull(c.hosmerLemeshowP());
        assertTrue(notes.stream().anyMatch(s -> s.contains("at least 3")), notes.toString());
        assertEquals(26, c.observed());
        assertEquals(25.0, c.expected(), 1e-12);
        // Source: AUC by counting pairs: positives at 0.3 beat the negatives at 0.1 (12 * 86), ties count one
        // half (12 * 38 + 14 * 86) / 2, over 26 * 124 pairs (definition, no source).
        assertEquals((12 * 86 + 0.5 * (12 * 38 + 14 * 86)) / (26.0 * 124), c.cStatistic(), 1e-12);
        // Two groups on [1, eta]: the slope fit is saturated, so it reproduces both observed proportions.
        double fittedLo = Math.log(0.14 / 0.86);
        double fittedHi = Math.log(0.24 / 0.76);
        assertEquals((fittedHi - fittedLo) / (hi - lo), c.slope(), 1e-8);
    }

    @Test
    void noPositivesLeavesTheFitsAndTheCStatisticNull() {
        WindowData data = CalibrationFixtures.window(2, new double[] {1, 0, 1, 1}, new double[] {40, 60},
                new double[] {0, 0});
        List<String> notes = new ArrayList<>();
        CalibrationEstimate c = CalibrationStatistics.compute(data, CalibrationFixtures.baseline(-2, 0.5), 0.95,
                FitControl.defaults(), notes::add);
        assertEquals(0, c.observed());
        assertEquals(0.0, c.observedExpected(), 0);
        assertEquals(0.0, c.oeLower(), 0);
        // Source: exact Poisson upper bound for O = 0 is -ln(alpha/2) = 3.6889 at 95 % (Garwood 1936; closed form).
        assertEquals(-Math.log(0.025) / c.expected(), c.oeUpper(), 1e-10);
        assertNull(c.intercept());
        assertNull(c.interceptSe());
        assertNull(c.slope());
        assertNull(c.cStatistic());
        assertNotNull(c.brier());
        assertNotNull(c.hosmerLemeshow());
        assertTrue(notes.get(0).contains("no positives"), notes.toString());
    }

    @Test
    void emptyWindowGivesOnlyNulls() {
        WindowData data = CalibrationFixtures.window(2, new double[0], new double[0], new double[0]);
        List<String> notes = new ArrayList<>();
        CalibrationEstimate c = CalibrationStatistics.compute(data, CalibrationFixtures.baseline(-2, 0.5), 0.95,
                FitControl.defaults(), notes::add);
        assertEquals(0, c.events());
        assertNull(c.expected());
        assertNull(c.observedExpected());
        assertNull(c.hosmerLemeshowGroups());
        assertNull(c.brier());
        assertEquals(1, notes.size());
    }

    @Test
    void constantRiskHasNoSlopeAndOneGroup() {
        WindowData data = CalibrationFixtures.window(2, new double[] {1, 0, 1, 1}, new double[] {40, 60},
                new double[] {5, 9});
        List<String> notes = new ArrayList<>();
        CalibrationEstimate c = CalibrationStatistics.compute(data, CalibrationFixtures.baseline(-2, 0.0), 0.95,
                FitControl.defaults(), notes::add);
        assertNull(c.slope());
        assertNotNull(c.intercept());
        // Source: intercept-only fit with a constant offset: logit(14/100) - (-2) (algebra of the ML estimate).
        assertEquals(Math.log(0.14 / 0.86) + 2, c.intercept(), 1e-9);
        assertEquals(1, c.hosmerLemeshowGroups());
        assertNull(c.hosmerLemeshowP());
        assertEquals(0.5, c.cStatistic(), 1e-15);
        assertTrue(notes.stream().anyMatch(s -> s.contains("same baseline risk")), notes.toString());
    }

    @Test
    void separatingBaselineHasNoSlope() {
        // Every positive sits at the higher baseline risk: the slope's ML estimate is infinite.
        WindowData data = CalibrationFixtures.window(2, new double[] {1, 0, 1, 1}, new double[] {40, 60},
                new double[] {0, 9});
        List<String> notes = new ArrayList<>();
        CalibrationEstimate c = CalibrationStatistics.compute(data, CalibrationFixtures.baseline(-2, 1.0), 0.95,
                FitControl.defaults(), notes::add);
        assertNull(c.slope());
        assertNull(c.slopeSe());
        assertNotNull(c.intercept());
        assertTrue(notes.stream().anyMatch(s -> s.contains("separates")), notes.toString());
    }

    @Test
    void rejectsABaselineOfTheWrongWidth() {
        WindowData data = CalibrationFixtures.window(2, new double[] {1, 0}, new double[] {4}, new double[] {1});
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> CalibrationStatistics.compute(data, CalibrationFixtures.baseline(-2, 0.5, 1.0), 0.95));
        assertTrue(e.getMessage().contains("3 columns"), e.getMessage());
    }

    private static void relative(double expected, Double actual, double tolerance, String what) {
        assertNotNull(actual, what);
        assertEquals(expected, actual, tolerance * Math.max(1e-300, Math.abs(expected)), what);
    }
}
