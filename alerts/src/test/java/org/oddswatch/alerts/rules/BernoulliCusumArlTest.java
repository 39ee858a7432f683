package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;

/**
 * Run lengths of {@link BernoulliCusumRule} against the Brook–Evans Markov chain and against a
 * fixed-seed simulation of the same chart code. Scenario: 30% exposed, baseline risk 4% unexposed
 * and odds ratio e (coefficient 1.0) for the exposed.
 */
class BernoulliCusumArlTest {

    private static final double B0 = Math.log(0.04 / 0.96);
    private static final double B1 = 1.0;
    private static final double[] SHARE = {0.7, 0.3};
    private static final double[] RISK = {expit(B0), expit(B0 + B1)};

    private static double expit(double x) {
        return 1 / (1 + Math.exp(-x));
    }

    /** Event times are distinct, so the id never decides the order. */
    private static final String ID = "e";

    private static BaselineModel baseline() {
        List<Column> cols = List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true));
        return new BaselineModel(cols, new double[] {B0, B1}, new double[][] {{0.01, 0}, {0, 0.01}}, null, null, 1, 1,
                null);
    }

    /**
     * Simulated run lengths (events until the first signal of {@code rule}) of fresh charts, events
     * drawn with odds = baseline odds times {@code trueMultiplier}.
     */
    private static double[] simulate(String rule, double h, double r, double trueMultiplier, int runs, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[] lengths = new double[runs];
        double[] unexposed = {1, 0};
        double[] exposed = {1, 1};
        for (int run = 0; run < runs; run++) {
            Cusum settings = new Cusum(r > 1 ? r : null, r < 1 ? r : null, h, null, null, null, null);
            BernoulliCusumRule chart = new BernoulliCusumRule(settings, new InformationGuard(new Guard(null, null, 0L)),
                    baseline());
            long t = 0;
            long signal = -1;
            while (signal < 0) {
                for (int i = 0; i < 256; i++, t++) {
                    boolean isExposed = rng.nextDouble() < SHARE[1];
                    double p = RISK[isExposed ? 1 : 0];
                    double odds = p / (1 - p) * trueMultiplier;
                    chart.offer(t, ID, isExposed ? exposed : unexposed,
                            rng.nextDouble() < odds / (1 + odds));
                }
                chart.close(t);
                signal = chart.firstSignalAt(rule); // events processed at the first signal = run length
            }
            lengths[run] = signal;
        }
        return lengths;
    }

    private static void assertAgrees(double markov, double[] lengths, String what) {
        double mean = 0;
        for (double l : lengths) {
            mean += l;
        }
        mean /= lengths.length;
        double var = 0;
        for (double l : lengths) {
            var += (l - mean) * (l - mean);
        }
        double se = Math.sqrt(var / (lengths.length - 1) / lengths.length);
        // simulation error (4 standard errors) plus 1% for the discretisation of the chain
        assertEquals(markov, mean, 4 * se + 0.01 * markov,
                what + ": Markov " + markov + ", simulated " + mean + " (se " + se + ")");
    }

    @Test
    void markovChainConvergesWithTheGrid() {
        // Source: Brook & Evans 1972; the chain's answer must not depend on the grid once it is fine.
        double coarse = CusumRunLength.bernoulli(3, 2, SHARE, RISK, 1, 500);
        double fine = CusumRunLength.bernoulli(3, 2, SHARE, RISK, 1, 1000);
        assertEquals(fine, coarse, 0.005 * fine);
    }

    @Test
    void inControlRunLengthOfTheUpperChart() {
        // Source: Brook & Evans (1972) Markov chain (written in BrookEvans, independent of the chart code)
        double markov = CusumRunLength.bernoulli(3, 2, SHARE, RISK, 1, 1000);
        assertTrue(markov > 1000 && markov < 2000, "sanity: " + markov);
        assertAgrees(markov, simulate(BernoulliCusumRule.UP, 3, 2, 1, 400, 20260401L), "ARL0 up, h=3, R=2");
    }

    @Test
    void shiftedRunLengthOfTheUpperChart() {
        double markov = CusumRunLength.bernoulli(3, 2, SHARE, RISK, 2, 1000);
        assertAgrees(markov, simulate(BernoulliCusumRule.UP, 3, 2, 2, 1500, 20260402L), "ARL1 up, odds doubled");
    }

    @Test
    void runLengthsOfTheLowerChart() {
        double inControl = CusumRunLength.bernoulli(3, 0.5, SHARE, RISK, 1, 1000);
        assertAgrees(inControl, simulate(BernoulliCusumRule.DOWN, 3, 0.5, 1, 300, 20260403L), "ARL0 down");
        double halved = CusumRunLength.bernoulli(3, 0.5, SHARE, RISK, 0.5, 1000);
        assertAgrees(halved, simulate(BernoulliCusumRule.DOWN, 3, 0.5, 0.5, 1500, 20260404L), "ARL1 down, odds halved");
    }

    @Test
    void defaultLimitsKeepFalseAlarmsRareAtTheReferenceLoad() {
        // The reference load (alerts/README.md): 2000 events a week, 5% prevalence. R_up 1.5, R_down 1/1.5, and
        // h 8, the limit used where the budget cannot derive one (and the fixed default before the budget).
        Cusum d = AlertRulesConfig.withLimit(new Cusum(null, null, null, null, null, null, null),
                AlertRulesConfig.CUSUM_FALLBACK_LIMIT);
        double[] share = {1.0};
        double[] risk = {0.05};
        double up = CusumRunLength.bernoulli(d.limit(), d.up(), share, risk, 1, 1000);
        double down = CusumRunLength.bernoulli(d.limit(), d.down(), share, risk, 1, 1000);
        double falseAlarmsPerYear = 2000 * 52 * (1 / up + 1 / down);
        System.out.printf("defaults: ARL0 up %.0f, down %.0f events; %.3f false alarms a year at 104,000 events%n", up, down,
                falseAlarmsPerYear);
        assertTrue(falseAlarmsPerYear < 0.5, "CUSUM false alarms per year at defaults: " + falseAlarmsPerYear);
        // A 30% rise in prevalence (5% -> 6.5%, odds x 1.32) is signalled within about two weeks on average.
        double shifted = CusumRunLength.bernoulli(d.limit(), d.up(), share, risk, (0.065 / 0.935) / (0.05 / 0.95), 1000);
        System.out.printf("defaults: ARL after a 30%% prevalence rise %.0f events%n", shifted);
        assertTrue(shifted < 2 * 2000, "ARL after a 30% prevalence rise: " + shifted);
    }

    /**
     * The limit the false-alarm budget derives for a pair tuned to {@code r}: the smallest h whose
     * upper chart at true odds {@code e^q} and lower chart at {@code e^-q} both reach {@code target}
     * events (the same rule as {@code FalseAlarmBudget}, written out here from its description).
     */
    private static double budgetLimit(double r, double target, double q) {
        double[] share = {1.0};
        double[] risk = {0.05};
        return Math.max(
                CusumRunLength.smallestLimit(h -> CusumRunLength.bernoulli(h, r, share, risk, Math.exp(q),
                        CusumRunLength.BUDGET_GRID), target, 1, 1e-3),
                CusumRunLength.smallestLimit(h -> CusumRunLength.bernoulli(h, 1 / r, share, risk, Math.exp(-q),
                        CusumRunLength.BUDGET_GRID), target, 1, 1e-3));
    }

    @Test
    void theDefaultMultiplierFindsA30PercentRiseSoonestAtTheBudgetsLimit() {
        // House load: 5 % prevalence, 2,000 events a week, a 12-week baseline of 24,000 events; the pair's
        // share of the default budget, 0.2 false alarms a year each (1 split equally over two step CUSUMs,
        // calibration and the two Bernoulli charts).
        double eventsPerYear = 2000 * 365.25 / 7;
        double target = eventsPerYear / 0.2;
        // the baseline's error in the overall log odds at its 1 - alpha/2 quantile, default confidence
        double q = new NormalDistribution(null, 0, 1).inverseCumulativeProbability(
                1 - (1 - AlertRulesConfig.DEFAULT_BUDGET_CONFIDENCE) / 2) / Math.sqrt(24_000 * 0.05 * 0.95);
        double rise = (0.065 / 0.935) / (0.05 / 0.95);
        double[] share = {1.0};
        double[] risk = {0.05};
        double defaultUp = new Cusum(null, null, null, null, null, null, null).up();
        double hDefault = budgetLimit(defaultUp, target, q);
        double delayDefault = CusumRunLength.bernoulli(hDefault, defaultUp, share, risk, rise, 400);
        for (double r : new double[] {1.3, 1.5, 2.0}) {
            if (r == defaultUp) {
                continue;
            }
            double h = budgetLimit(r, target, q);
            double delay = CusumRunLength.bernoulli(h, r, share, risk, rise, 400);
            System.out.printf("R %.2f: budget limit %.2f, ARL after a 30%% rise %.0f events (default R %.2f: %.2f, %.0f)%n",
                    r, h, delay, defaultUp, hDefault, delayDefault);
            // Matching R to the rise (1.3) would be optimal for a known baseline (Moustakides 1986), but the
            // budget's allowance for the baseline's error (true odds e^q = 1.079 in control at 0.99) costs a chart tuned
            // close to 1 more limit than it gains: the default must not be slower than the alternatives (1.4
            // computed within 3 % of 1.5 at confidence 0.9; the detection harness measured 1.3 and 1.8 slower than 1.5 at 0.99).
            assertTrue(delayDefault <= delay, "default R " + defaultUp + " slower than R " + r + ": "
                    + delayDefault + " > " + delay);
        }
    }
}
