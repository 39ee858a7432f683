package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Instant;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.rules.OddsRatioCusumRule.ChartSettings;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;

/**
 * Run lengths of {@link OddsRatioCusumRule} (in window steps) against the normal-CUSUM Markov chain
 * of {@link CusumRunLength}, with events drawn from the baseline model itself (fixed seeds): 400 new
 * events a step, 30 % exposed, baseline risk 8 % unexposed and odds ratio 2 for the exposed.
 */
class OddsRatioCusumArlTest {

    private static final double B0 = Math.log(0.08 / 0.92);
    private static final double B1 = Math.log(2);
    private static final long STEP = 1_000_000L;

    private static BaselineModel baseline() {
        List<Column> cols = List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true));
        return new BaselineModel(cols, new double[] {B0, B1}, new double[][] {{0.01, 0}, {0, 0.01}}, null, null, 1, 1,
                null);
    }

    /** Steps until the first signal of a fresh chart, events with odds ratio {@code b1} and intercept {@code b0}. */
    private static double[] simulate(ChartSettings settings, double b0, double b1, int runs, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[] lengths = new double[runs];
        double[] unexposed = {1, 0};
        double[] exposed = {1, 1};
        for (int run = 0; run < runs; run++) {
            OddsRatioCusumRule rule = new OddsRatioCusumRule(baseline(), List.of(1), List.of(settings),
                    new InformationGuard(new Guard(null, null, 0L)), 2, 0.5);
            long t = 0;
            for (int step = 1; ; step++) {
                for (int i = 0; i < 400; i++, t++) {
                    boolean isExposed = rng.nextDouble() < 0.3;
                    double eta = b0 + (isExposed ? b1 : 0);
                    rule.offer(t, "e", isExposed ? exposed : unexposed, rng.nextDouble() < 1 / (1 + Math.exp(-eta)));
                }
                t = (long) step * STEP;
                if (rule.report(Instant.ofEpochMilli(t)).get(0).zone() == Zone.BEYOND) {
                    lengths[run] = step;
                    break;
                }
            }
        }
        return lengths;
    }

    private static double mean(double[] v) {
        double m = 0;
        for (double x : v) {
            m += x;
        }
        return m / v.length;
    }

    @Test
    void inControlRunLengthAgreesWithTheMarkovChainWithinTenPercent() {
        ChartSettings s = new ChartSettings(0.5, 3.0);
        // Source: Brook & Evans (1972) Markov chain for the two-sided normal CUSUM (checked against
        // Montgomery's table in CusumRunLengthTest)
        double markov = CusumRunLength.normalTwoSided(3.0, 0.5, 0, 400);
        double simulated = mean(simulate(s, B0, B1, 800, 20261203L));
        assertTrue(markov > 40 && markov < 80, "sanity: " + markov);
        assertEquals(markov, simulated, 0.10 * markov, "in-control ARL: Markov " + markov + ", simulated " + simulated);
    }

    @Test
    void aPrevalenceRiseAloneHardlyMovesTheChart() {
        // every odds times 1.5 (intercept shifted): the score re-estimates the intercept, so the run length
        // stays near the in-control one (well above half of it), unlike a risk CUSUM
        ChartSettings s = new ChartSettings(0.5, 3.0);
        double markov = CusumRunLength.normalTwoSided(3.0, 0.5, 0, 400);
        double simulated = mean(simulate(s, B0 + Math.log(1.5), B1, 600, 20261204L));
        assertTrue(simulated > 0.7 * markov, "ARL after a prevalence rise " + simulated + " against " + markov);
    }

    @Test
    void anOddsRatioDoublingIsFoundAsTheChainPredicts() {
        // information per step on the log odds ratio: 1 / (1/(n1 w1) + 1/(n0 w0)) at the doubled odds
        double p1 = 1 / (1 + Math.exp(-(B0 + 2 * B1)));
        double p0 = 1 / (1 + Math.exp(-B0));
        double info = 1 / (1 / (120 * p1 * (1 - p1)) + 1 / (280 * p0 * (1 - p0)));
        double shift = Math.log(2) * Math.sqrt(info);
        ChartSettings s = new ChartSettings(shift / 2, 3.0);
        double markov = CusumRunLength.normalTwoSided(3.0, shift / 2, shift, 400);
        double simulated = mean(simulate(s, B0, 2 * B1, 1500, 20261205L));
        // the score's mean under the alternative is a local approximation: within 20 %
        assertEquals(markov, simulated, 0.20 * markov, "ARL after doubling: Markov " + markov + ", simulated " + simulated);
    }
}
