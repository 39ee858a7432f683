package org.oddswatch.alerts.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.engine.AlertRulesConfig.Band;
import org.oddswatch.alerts.engine.AlertRulesConfig.Calibration;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioCusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioDrift;
import org.oddswatch.alerts.engine.FalseAlarmBudget.Share;
import org.oddswatch.alerts.rules.CusumRunLength;
import org.oddswatch.alerts.rules.OddsRatioCusumRule.ChartSettings;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * The budget's split on a constructed monitor: 2 false alarms a year over 4 streams, weekly steps, a
 * 12-week baseline of 24,000 events (1,200 positives), two watched columns, drift at |z| 3, the
 * step-score CUSUM and the Bernoulli CUSUM left to the budget, calibration on.
 */
class FalseAlarmBudgetTest {

    private static final long WEEK = 7 * 86_400_000L;
    private static final double STEPS_PER_YEAR = 365.25 / 7;
    private static final double SE_HOUSEHOLD = 0.065;
    private static final double SE_TRAVEL = 0.09;
    // Source: R 4.2.2, the calibration rule's union bound written out with pnorm for this baseline and a
    // 4-week window (400 expected positives; slope information 0.81/0.065^2 + 0.36/0.09^2 + 0.01/0.004),
    // each band test at the larger of its probability averaged over the baseline's error and its
    // probability at the error's 90 % quantile (q = qnorm(0.95)): O/E 2.21017e-8 each side, slope
    // 1.138469e-4 each side (the conditional one in both), HL 1e-4; per year x 365.25/7 = 0.0171008961262636
    private static final double CALIBRATION_PER_YEAR = 0.0171008961262636;
    /** The tests pin the budget's confidence at 0.9 (the quantile 1.6449 below), whatever the default. */
    private static final double CONFIDENCE = 0.9;

    private static BaselineModel baseline() {
        List<Column> cols = List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true),
                new Column("recent_travel", "yes", "no", null, true, true),
                new Column("sex", "male", "female", null, false, true));
        double[][] cov = new double[4][4];
        cov[0][0] = 0.003;
        cov[1][1] = SE_HOUSEHOLD * SE_HOUSEHOLD;
        cov[2][2] = SE_TRAVEL * SE_TRAVEL;
        cov[3][3] = 0.004;
        return new BaselineModel(cols, new double[] {-3.2, 0.9, 0.6, 0.1}, cov, "2026-01-05T00:00:00Z",
                "2026-03-30T00:00:00Z", 24_000, 1_200, null);
    }

    /** Drift at the given limit, calibration with explicit bands (the earlier defaults), CUSUMs as given. */
    private static AlertRulesConfig rules(Double driftLimit, Double scoreLimit) {
        return rules(driftLimit, scoreLimit, new Calibration(new Band(0.8, 1.25), new Band(0.7, 1.3), null, null, null,
                null, null));
    }

    private static AlertRulesConfig rules(Double driftLimit, Double scoreLimit, Calibration calibration) {
        return new AlertRulesConfig(null, new OddsRatioDrift(driftLimit, null, null, null, null, null), null,
                calibration, new Cusum(null, null, null, null, null, null, null),
                new OddsRatioCusum(null, null, scoreLimit, null, null, null, null), 2.0, CONFIDENCE);
    }

    private static Calibration bandsLeftOut(Band observedExpected) {
        return new Calibration(observedExpected, null, null, null, null, null, null);
    }

    @Test
    void calibrationBandsLeftOutAreDerivedFromTheirShare() {
        FalseAlarmBudget b = derive(rules(3.0, null, bandsLeftOut(null)));
        List<Share> shares = b.shares();
        assertEquals(List.of("odds-ratio-drift explicit", "odds-ratio-drift explicit", "calibration derived",
                "odds-ratio-cusum derived", "odds-ratio-cusum derived", "bernoulli-cusum-up derived",
                "bernoulli-cusum-down derived"), shares.stream().map(s -> s.rule() + " " + s.how()).toList());
        // Source: R 4.2.2, the union bound of CalibrationFalseAlarms solved for the band ends with qnorm:
        // share (0.5 - 2·(365.25/7)·2·pnorm(-3))/5 = 0.0436513993082409 a year per unit, 8.3658e-4 a
        // step; the Hosmer-Lemeshow level 1e-4 first, the rest over 4 ends: z_e = qnorm(1 - e) = 3.56182306330084;
        // O/E = exp(±(m - 1.96·s_w)), m = max(s·z_e, s_w·z_e + q·s_b) with s_w = 1/sqrt(400), s_b = 1/sqrt(1200),
        // s = sqrt(s_w² + s_b²), q = qnorm(0.95) (the conditional one, 0.2256 against 0.2056, is the larger):
        // [0.880226702550262, 1.13607096569863]; slope 1 ± (max(t·z_e, t_w·z_e + q·t_b) - 1.96·t_w):
        // [0.71393643157301, 1.28606356842699]
        double unit = 0.0436513993082409;
        Calibration c = b.calibration();
        assertEquals(0.880226702550262, c.observedExpected().min(), 1e-9);
        assertEquals(1.13607096569863, c.observedExpected().max(), 1e-9);
        assertEquals(0.71393643157301, c.slope().min(), 1e-9);
        assertEquals(1.28606356842699, c.slope().max(), 1e-9);
        assertEquals(unit, shares.get(2).perYear(), 1e-9, "the derived bands spend the calibration's share: "
                + shares.get(2).describe());
        for (Share s : shares.subList(3, 7)) {
            assertEquals(unit, s.perYear(), 1e-12, s.describe());
        }
        double total = shares.stream().mapToDouble(Share::perYear).sum();
        assertEquals(0.5, total, 1e-9, "the stream's share is used exactly");
    }

    @Test
    void aGivenBandEndWinsAndOnlyTheLeftOutOnesAreDerived() {
        FalseAlarmBudget b = derive(rules(3.0, null, bandsLeftOut(new Band(null, 1.5))));
        Calibration c = b.calibration();
        assertEquals(1.5, c.observedExpected().max(), "explicit");
        assertTrue(c.observedExpected().min() > 0.8 && c.observedExpected().min() < 1, c.toString());
        double total = b.shares().stream().mapToDouble(Share::perYear).sum();
        assertEquals(0.5, total, 1e-9, "the explicit end is charged and the rest still adds up");
        // every end given: charged as explicit, the bands as written
        FalseAlarmBudget explicit = derive(rules(3.0, null));
        assertEquals("explicit", explicit.shares().get(2).how());
        assertEquals(new Band(0.8, 1.25), explicit.calibration().observedExpected());
    }

    @Test
    void theDefaultRulesOfASplitMonitorAddUpWithinItsBudget() {
        // the defaults (no window z-rule) on a monitor split 16 ways: one false alarm a year in all
        AlertRulesConfig defaults = AlertRulesConfig.defaults();
        FalseAlarmBudget b = FalseAlarmBudget.derive(defaults, baseline(), new WindowGeometry(4 * WEEK, WEEK, 0, 0), 16);
        assertEquals(List.of("calibration derived", "odds-ratio-cusum derived", "odds-ratio-cusum derived",
                "bernoulli-cusum-up derived", "bernoulli-cusum-down derived"),
                b.shares().stream().map(s -> s.rule() + " " + s.how()).toList());
        double total = b.shares().stream().mapToDouble(Share::perYear).sum();
        assertEquals(1.0 / 16, total, 1e-9, "16 streams spend the monitor's one false alarm a year");
        assertFalse(b.overspent());
    }

    private static FalseAlarmBudget derive(AlertRulesConfig rules) {
        return FalseAlarmBudget.derive(rules, baseline(), new WindowGeometry(4 * WEEK, WEEK, 0, 0), 4);
    }

    @Test
    void theMonitorsBudgetIsSplitOverStreamsThenOverRules() {
        FalseAlarmBudget b = derive(rules(3.0, null));
        assertEquals(0.5, b.perStream(), 1e-15);
        // Source: standard normal table, P(|Z| >= 3) = 0.0026997960632601
        double drift = STEPS_PER_YEAR * 0.0026997960632601;
        List<Share> shares = b.shares();
        assertEquals(List.of("odds-ratio-drift explicit", "odds-ratio-drift explicit", "calibration explicit",
                "odds-ratio-cusum derived", "odds-ratio-cusum derived", "bernoulli-cusum-up derived",
                "bernoulli-cusum-down derived"), shares.stream().map(s -> s.rule() + " " + s.how()).toList());
        assertEquals(drift, shares.get(0).perYear(), 1e-9);
        assertEquals(CALIBRATION_PER_YEAR, shares.get(2).perYear(), 1e-9, shares.get(2).describe());
        double each = (0.5 - 2 * drift - shares.get(2).perYear()) / 4;
        for (Share s : shares.subList(3, 7)) {
            assertEquals(each, s.perYear(), 1e-12, s.describe());
        }
        double total = shares.stream().filter(s -> !Double.isNaN(s.perYear())).mapToDouble(Share::perYear).sum();
        assertEquals(0.5, total, 1e-12, "the counted shares use the stream's share exactly");
        assertFalse(b.overspent());
    }

    @Test
    void eachDerivedLimitIsTheSmallestThatKeepsItsShareAtTheBaselinesErrorQuantile() {
        FalseAlarmBudget b = derive(rules(3.0, null));
        double each = (0.5 - 2 * STEPS_PER_YEAR * 0.0026997960632601 - CALIBRATION_PER_YEAR) / 4;
        double target = STEPS_PER_YEAR / each;
        // 90 % of |N(0, 1/12)| lies below 1.6449 / sqrt(12): the in-control shift the limit is solved at
        double shift = 1.6448536269514722 / Math.sqrt(12);
        double k = Math.log(2) / (SE_HOUSEHOLD * Math.sqrt(12)) / 2;
        ChartSettings household = b.scoreCharts().get(1);
        assertEquals(k, household.reference(), 1e-12);
        double h = household.limit();
        // both conditions hold at h: the run length at the shift quantile, and the run length averaged
        // over the baseline's error N(0, 1/12); a limit 0.01 lower misses one of them
        double tau = 1 / Math.sqrt(12);
        assertTrue(CusumRunLength.normalTwoSided(h, k, shift, CusumRunLength.BUDGET_GRID) >= target);
        assertTrue(CusumRunLength.normalTwoSidedOverError(h, k, tau, CusumRunLength.BUDGET_GRID) >= target);
        assertTrue(CusumRunLength.normalTwoSided(h - 0.01, k, shift, CusumRunLength.BUDGET_GRID) < target
                || CusumRunLength.normalTwoSidedOverError(h - 0.01, k, tau, CusumRunLength.BUDGET_GRID) < target,
                "boundary: a limit 0.01 lower misses the target run length " + target);
        // Bernoulli pair: 24,000 events in 12 weeks, so 104,357 a year; prevalence 0.05
        double events = 24_000 / 12.0 * STEPS_PER_YEAR;
        double q = 1.6448536269514722 / Math.sqrt(24_000 * 0.05 * 0.95);
        double cusum = b.cusumLimit();
        double up = CusumRunLength.bernoulli(cusum, 1.5, new double[] {1}, new double[] {0.05}, Math.exp(q), 300);
        double down = CusumRunLength.bernoulli(cusum, 1 / 1.5, new double[] {1}, new double[] {0.05}, Math.exp(-q), 300);
        assertTrue(Math.min(up, down) >= events / each, "both charts reach " + events / each + ": " + up + ", " + down);
        double lower = cusum - 0.011;
        assertTrue(Math.min(CusumRunLength.bernoulli(lower, 1.5, new double[] {1}, new double[] {0.05}, Math.exp(q), 300),
                CusumRunLength.bernoulli(lower, 1 / 1.5, new double[] {1}, new double[] {0.05}, Math.exp(-q), 300))
                < events / each, "boundary of the Bernoulli limit");
    }

    @Test
    void explicitLimitsWinAndAreChargedFirst() {
        FalseAlarmBudget b = derive(rules(3.0, 4.5));
        assertEquals(4.5, b.scoreCharts().get(1).limit());
        assertEquals(4.5, b.scoreCharts().get(2).limit());
        Share household = b.shares().get(3);
        assertEquals("explicit", household.how());
        double k = b.scoreCharts().get(1).reference();
        assertEquals(STEPS_PER_YEAR / CusumRunLength.normalTwoSided(4.5, k, 0, CusumRunLength.BUDGET_GRID),
                household.perYear(), 1e-12);
        // only the Bernoulli pair is left to the budget now
        double charged = b.shares().stream().filter(s -> "explicit".equals(s.how())).mapToDouble(Share::perYear).sum();
        assertEquals((0.5 - charged) / 2, b.shares().get(5).perYear(), 1e-12);
    }

    @Test
    void explicitLimitsThatSpendTheBudgetAreFlagged() {
        FalseAlarmBudget b = derive(rules(1.5, null));
        assertTrue(b.overspent());
        assertEquals(0.05 / 4, b.shares().get(3).perYear(), 1e-12, "a tenth of the stream's share is left for the rest");
    }

    @Test
    void theEngineRunsTheDerivedLimits() {
        AlertRulesConfig rules = rules(3.0, null);
        WindowGeometry grid = new WindowGeometry(4 * WEEK, WEEK, 0, 0);
        AlertEngine engine = new AlertEngine("s", rules, baseline(), null, grid,
                org.oddswatch.alerts.privacy.SmallCellPolicy.DEFAULT, 4);
        FalseAlarmBudget expected = FalseAlarmBudget.derive(rules, baseline(), grid, 4);
        assertEquals(expected.shares(), engine.budget().shares());
        assertTrue(engine.cusumReadings().stream().allMatch(r -> r.limit() == expected.cusumLimit()),
                "the Bernoulli charts run with h = " + expected.cusumLimit());
        // a split of 1 stream gets four times the share, so lower limits
        FalseAlarmBudget alone = FalseAlarmBudget.derive(rules, baseline(), grid, 1);
        assertTrue(alone.cusumLimit() < expected.cusumLimit());
        assertTrue(alone.scoreCharts().get(1).limit() < expected.scoreCharts().get(1).limit());
    }

    @Test
    void aSmallStreamWhoseBaselineErrorExceedsKGetsALimitAndSaysThereIsNoAverageGuarantee() {
        // household se 0.5 over 12 weekly steps: I_step = 1/3, k = ln 2 · sqrt(1/3) / 2 = 0.200, below the
        // baseline error's sd 1/sqrt(12) = 0.289, so baselines beyond k drift to a signal whatever h
        List<Column> cols = List.of(Column.intercept(), new Column("household_contact", "yes", "no", null, true, true));
        BaselineModel small = new BaselineModel(cols, new double[] {-2, 0.7}, new double[][] {{0.1, 0}, {0, 0.25}},
                "2026-01-05T00:00:00Z", "2026-03-30T00:00:00Z", 2_400, 270, null);
        FalseAlarmBudget b = FalseAlarmBudget.derive(rules(3.0, null), small, new WindowGeometry(4 * WEEK, WEEK, 0, 0), 16);
        Share household = b.shares().stream().filter(s -> s.rule().equals("odds-ratio-cusum")).findFirst().orElseThrow();
        assertTrue(household.detail().contains("NO AVERAGE GUARANTEE"), household.describe());
        assertTrue(b.scoreCharts().get(1).limit() > 0);
    }
}
