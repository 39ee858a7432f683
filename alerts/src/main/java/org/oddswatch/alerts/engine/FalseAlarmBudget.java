package org.oddswatch.alerts.engine;

import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioCusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioDrift;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.rules.BernoulliCusumRule;
import org.oddswatch.alerts.rules.CalibrationRule;
import org.oddswatch.alerts.rules.CusumRunLength;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.alerts.rules.OddsRatioCusumRule;
import org.oddswatch.alerts.rules.OddsRatioCusumRule.ChartSettings;
import org.oddswatch.alerts.rules.OddsRatioDriftRule;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * The limits a false-alarm budget gives one stream, and how the budget was split.
 *
 * <p><b>Split.</b> The monitor's {@code falseAlarmsPerYear} (B) is divided equally over its streams
 * (the split's {@code maxStreams}, 1 without a split), so a split monitor keeps B in all. Within a
 * stream, rules with explicit limits are charged first with their expected false alarms a year:
 * <ul>
 *   <li>drift rule, per watched column: {@code stepsPerYear · 2 (1 - Φ(limit))}. Overlapping windows
 *       make successive z's dependent, so no exact rate exists; the union bound (expected false
 *       alarms &le; steps × per-step probability) is valid and conservative;</li>
 *   <li>an explicit CUSUM limit: events (or steps) per year divided by its computed in-control run
 *       length;</li>
 *   <li>calibration: {@code stepsPerYear} times the union bound of its tests' in-control
 *       probabilities per step ({@link CalibrationFalseAlarms}: the O/E and slope bands through
 *       their standard errors from the baseline, the Hosmer–Lemeshow test at its p limit), so a split
 *       monitor's streams share one budget with their calibration too;</li>
 *   <li>bounds: not charged (they are the user's fixed thresholds on the odds ratio's interval).</li>
 * </ul>
 * What remains (at least a tenth of the stream's share, flagged as overspent when the explicit
 * limits took more) is split equally over the charts whose limit is left to the budget: each
 * watched column's step-score CUSUM (two-sided, one unit) and the Bernoulli CUSUM's upper and lower
 * chart (one unit each). A chart's share {@code a} per year becomes a target in-control run length in
 * its own steps: {@code stepsPerYear / a} window steps ({@code stepsPerYear = 365.25 days / step}), or
 * {@code eventsPerYear / a} events for the Bernoulli charts ({@code eventsPerYear} from the
 * baseline's events over its period); the limit h is the smallest with that computed run length
 * ({@link CusumRunLength}, bisection on h).
 *
 * <p><b>The estimated baseline</b> (guaranteed conditional performance, Gandy &amp; Kvaløy 2013,
 * <i>Scand J Stat</i> 40:647). A chart judged against an estimated baseline runs with a persistent
 * error: for the step score, the baseline coefficient's error {@code e ~ N(0, se_base²)} shifts the
 * in-control mean of every {@code z_t} by {@code e · sqrt(I_step)}, which is
 * {@code N(0, τ²)} with {@code τ² = se_base² · I_step ≈ 1 / baselineSteps} (the step's information is
 * the baseline's divided by the number of steps the baseline period spans). The run length falls as
 * {@code |shift|} grows, so the limit that keeps the run length at or above the target with
 * probability {@code budgetConfidence = 1 - α} over the baseline's error is the limit computed at
 * the shift's quantile {@code τ · Φ⁻¹(1 - α/2)}; no resampling is needed because the run length is
 * monotone in the one parameter that carries the error. That guarantee alone does not bound the
 * false alarms a monitor raises on average: a chart with in-control mean {@code s} alarms at the
 * long-run rate {@code 1 / L(s)} (it restarts after each signal), so over baselines the expected
 * rate is {@code E_s[1 / L(s)]}, which the few baselines beyond the quantile dominate (with a
 * 12-week baseline and weekly steps, {@code τ = 0.29}, the averaged run length of a chart with
 * k 1.54, h 1.93 is 536 steps against 1,152 with a known baseline). The limit is therefore also
 * held to the target on that average ({@link CusumRunLength#normalTwoSidedOverError}, Gauss–Hermite
 * quadrature over {@code s ~ N(0, τ²)}), and the larger of the two limits is used: the budget is
 * then kept both with the stated confidence for one baseline and in expectation over baselines.
 * For the Bernoulli charts the error sits in
 * the overall log odds, {@code se ≈ 1 / sqrt(n p (1 - p))} from the baseline's events n and
 * prevalence p: the upper chart is solved at true odds {@code exp(+q)} times the baseline's, the lower
 * at {@code exp(-q)}, {@code q = se · Φ⁻¹(1 - α/2)}, and both use the larger h. The Bernoulli run
 * length is computed at one risk class, the baseline prevalence (an approximation: the chart's
 * in-control drift depends on the spread of risks only weakly at the prevalences monitored here).
 *
 * <p>The step-score CUSUM's reference value k, unless given, is half the design shift in a step's
 * standard errors: {@code k = |ln designOddsRatio| · sqrt(I_step) / 2}, {@code I_step = 1 / (se_base² ·
 * baselineSteps)} (Page's choice of k for a shift δ: δ / 2, which minimises the out-of-control run
 * length near δ). Where the baseline gives no period or the geometry no step, k = 0.5, the shift
 * quantile is 0 and the Bernoulli limit falls back to {@link AlertRulesConfig#CUSUM_FALLBACK_LIMIT},
 * and the split says so. Pure and deterministic: the same settings and baseline give the same limits.
 */
public final class FalseAlarmBudget {

    /** Days in a year for "per year". */
    public static final double DAYS_PER_YEAR = 365.25;
    private static final double YEAR_MILLIS = DAYS_PER_YEAR * 86_400_000.0;
    private static final NormalDistribution STANDARD = new NormalDistribution(null, 0, 1);
    /** Grid of the Bernoulli chain when solving for h: within 1 % of the 1,000-state chain (tested). */
    static final int BERNOULLI_GRID = 300;

    /**
     * One line of the split.
     *
     * @param rule the rule name
     * @param subject the subject (term=level, {@code calibration} or {@code all events})
     * @param how {@code derived}, {@code explicit} or {@code not counted}
     * @param perYear the false alarms a year charged to it (NaN when not counted)
     * @param limit the limit it runs with (null when none applies)
     * @param detail how the figures were obtained, in words
     */
    public record Share(String rule, String subject, String how, double perYear, Double limit, String detail) {

        /** One line for {@code check}. */
        public String describe() {
            return rule + " " + subject + ": " + how
                    + (Double.isNaN(perYear) ? "" : String.format(Locale.ROOT, ", %.4f false alarms a year", perYear))
                    + (limit == null ? "" : String.format(Locale.ROOT, ", limit %.4g", limit))
                    + (detail == null || detail.isEmpty() ? "" : " (" + detail + ")");
        }
    }

    private final List<Share> shares;
    private final double cusumLimit;
    private final Map<Integer, ChartSettings> scoreCharts;
    private final double perStream;
    private final boolean overspent;

    private final AlertRulesConfig.Calibration calibration;

    private FalseAlarmBudget(List<Share> shares, double cusumLimit, Map<Integer, ChartSettings> scoreCharts,
                             double perStream, boolean overspent, AlertRulesConfig.Calibration calibration) {
        this.calibration = calibration;
        this.shares = List.copyOf(shares);
        this.cusumLimit = cusumLimit;
        this.scoreCharts = scoreCharts;
        this.perStream = perStream;
        this.overspent = overspent;
    }

    /** The split, one line per rule and subject, in a fixed order. */
    public List<Share> shares() {
        return shares;
    }

    /** The stream's share of the monitor's budget. */
    public double perStream() {
        return perStream;
    }

    /** Whether explicit limits alone use up more than 90 % of the stream's share. */
    public boolean overspent() {
        return overspent;
    }

    /** The Bernoulli CUSUM's limit h: the explicit one, else the derived one (NaN without that rule). */
    public double cusumLimit() {
        return cusumLimit;
    }

    /**
     * The calibration settings the rule runs with: band ends left out derived from the budget (as in
     * the split), given ones kept; null without the calibration rule.
     */
    public AlertRulesConfig.Calibration calibration() {
        return calibration;
    }

    /** The step-score CUSUM's settings by watched design column (index into the baseline's columns). */
    public Map<Integer, ChartSettings> scoreCharts() {
        return scoreCharts;
    }

    /**
     * The budget before any baseline exists, in words: the monitor's false alarms a year, each
     * stream's share, and which limits are left to it ({@code check} prints this line per monitor).
     */
    public static String describe(AlertRulesConfig rules, int streams) {
        List<String> left = new ArrayList<>();
        if (rules.cusum() != null && rules.cusum().limit() == null) {
            left.add("cusum.limit");
        }
        if (rules.oddsRatioCusum() != null && rules.oddsRatioCusum().limit() == null) {
            left.add("oddsRatioCusum.limit");
        }
        if (rules.calibration() != null && rules.calibration().bandsLeftOut()) {
            left.add("calibration bands");
        }
        return String.format(Locale.ROOT, "false-alarm budget: %s a year for the monitor, %s per stream over %d"
                + " stream%s (confidence %.2f against the baseline's error); %s", Format.num(rules.falseAlarmsPerYear()),
                Format.num(rules.falseAlarmsPerYear() / Math.max(1, streams)), Math.max(1, streams), streams == 1 ? "" : "s",
                rules.budgetConfidence(), left.isEmpty() ? "every limit is explicit"
                        : String.join(" and ", left) + " derived per stream from its baseline");
    }

    /** The design columns a rule's {@code terms} select: every watched one when empty (never the intercept). */
    public static List<Integer> selected(BaselineModel baseline, List<TermLimits> terms) {
        List<Integer> out = new ArrayList<>();
        List<Column> columns = baseline.columns();
        for (int j = 0; j < columns.size(); j++) {
            Column c = columns.get(j);
            if (!c.isIntercept() && (terms.isEmpty() ? c.watched()
                    : terms.stream().anyMatch(t -> t.selects(c.term(), c.level())))) {
                out.add(j);
            }
        }
        return out;
    }

    private static TermLimits entry(List<TermLimits> terms, Column c) {
        return terms.stream().filter(t -> t.selects(c.term(), c.level())).findFirst().orElse(null);
    }

    /**
     * Derives one stream's limits (see the class description).
     *
     * @param rules the monitor's rule settings
     * @param baseline the stream's baseline model (not null)
     * @param grid the window geometry (null: weekly steps assumed, said in the split)
     * @param streams the monitor's streams the budget is shared by (at least 1)
     */
    public static FalseAlarmBudget derive(AlertRulesConfig rules, BaselineModel baseline, WindowGeometry grid,
                                          int streams) {
        double perStream = rules.falseAlarmsPerYear() / Math.max(1, streams);
        double stepMillis = grid == null ? 7 * 86_400_000.0 : grid.stepMillis();
        double stepsPerYear = YEAR_MILLIS / stepMillis;
        double periodMillis = periodMillis(baseline);
        double baselineSteps = periodMillis / stepMillis;
        double eventsPerYear = baseline.events() / periodMillis * YEAR_MILLIS;
        double quantile = STANDARD.inverseCumulativeProbability(1 - (1 - rules.budgetConfidence()) / 2);
        List<Column> columns = baseline.columns();

        List<Share> shares = new ArrayList<>();
        double charged = 0;
        int units = 0;
        OddsRatioDrift drift = rules.oddsRatioDrift();
        if (drift != null) {
            for (int j : selected(baseline, drift.terms())) {
                TermLimits t = entry(drift.terms(), columns.get(j));
                double limit = t != null && t.limit() != null ? t.limit() : drift.limit();
                double perStep = 2 * STANDARD.cumulativeProbability(-limit);
                double perYear = stepsPerYear * perStep;
                charged += perYear;
                shares.add(new Share(OddsRatioDriftRule.NAME, columns.get(j).label(), "explicit", perYear, limit,
                        String.format(Locale.ROOT, "union bound: %.1f steps a year x P(|z| >= %.3g) = %.2e", stepsPerYear,
                                limit, perStep)));
            }
        }
        double windowShare = (grid == null ? stepMillis : grid.widthMillis()) / periodMillis;
        AlertRulesConfig.Calibration calibration = rules.calibration();
        int calibrationLine = -1;
        if (calibration != null) {
            List<CalibrationFalseAlarms.Term> terms = CalibrationFalseAlarms.perStep(calibration, baseline, windowShare,
                    rules.budgetConfidence());
            if (calibration.bandsLeftOut() && !terms.isEmpty()) {
                calibrationLine = shares.size();
                units++;
            } else if (terms.isEmpty()) {
                shares.add(new Share(CalibrationRule.NAME, "calibration", "not counted", Double.NaN, null,
                        "the baseline gives no expected positives per window"));
            } else {
                double perStep = terms.stream().mapToDouble(CalibrationFalseAlarms.Term::perStep).sum();
                double perYear = stepsPerYear * perStep;
                charged += perYear;
                shares.add(new Share(CalibrationRule.NAME, "calibration", "explicit", perYear, null,
                        String.format(Locale.ROOT, "union bound: %.1f steps a year x %.2e per step (%s)", stepsPerYear,
                                perStep, CalibrationFalseAlarms.describe(terms))));
            }
        }
        OddsRatioCusum score = rules.oddsRatioCusum();
        Map<Integer, Double> scoreReference = new LinkedHashMap<>();
        List<Integer> scoreDerived = new ArrayList<>();
        Map<Integer, ChartSettings> scoreCharts = new LinkedHashMap<>();
        if (score != null) {
            for (int j : selected(baseline, score.terms())) {
                double se = Math.sqrt(baseline.covariance()[j][j]);
                double stepInformation = 1 / (se * se * baselineSteps);
                double k = score.reference() != null ? score.reference()
                        : Double.isFinite(stepInformation) && stepInformation > 0
                                ? Math.abs(Math.log(score.designOddsRatio())) * Math.sqrt(stepInformation) / 2 : 0.5;
                scoreReference.put(j, k);
                TermLimits t = entry(score.terms(), columns.get(j));
                Double explicit = t != null && t.limit() != null ? t.limit() : score.limit();
                if (explicit != null) {
                    double perYear = stepsPerYear / CusumRunLength.normalTwoSided(explicit, k, 0, CusumRunLength.BUDGET_GRID);
                    charged += perYear;
                    scoreCharts.put(j, new ChartSettings(k, explicit));
                    shares.add(new Share(OddsRatioCusumRule.NAME, columns.get(j).label(), "explicit", perYear, explicit,
                            String.format(Locale.ROOT, "k %.3f", k)));
                } else {
                    scoreDerived.add(j);
                    units++;
                }
            }
        }
        Cusum cusum = rules.cusum();
        boolean cusumDerived = cusum != null && cusum.limit() == null && Double.isFinite(eventsPerYear)
                && baseline.cases() > 0 && baseline.cases() < baseline.events();
        double cusumLimit = cusum == null ? Double.NaN
                : cusum.limit() != null ? cusum.limit() : AlertRulesConfig.CUSUM_FALLBACK_LIMIT;
        double prevalence = baseline.events() > 0 ? (double) baseline.cases() / baseline.events() : Double.NaN;
        if (cusum != null && !cusumDerived) {
            if (Double.isFinite(eventsPerYear) && prevalence > 0 && prevalence < 1) {
                double perYear = eventsPerYear * (1 / bernoulli(cusumLimit, cusum.up(), prevalence, 1)
                        + 1 / bernoulli(cusumLimit, cusum.down(), prevalence, 1));
                charged += perYear;
                shares.add(new Share(AlertRulesConfig.CUSUM, "all events", "explicit", perYear, cusumLimit,
                        String.format(Locale.ROOT, "up and down at %.0f events a year", eventsPerYear)));
            } else {
                shares.add(new Share(AlertRulesConfig.CUSUM, "all events", "not counted", Double.NaN, cusumLimit,
                        "the baseline gives no event rate; fixed limit"));
            }
        } else if (cusumDerived) {
            units += 2;
        }
        double remaining = perStream - charged;
        boolean overspent = remaining < 0.1 * perStream;
        remaining = Math.max(remaining, 0.1 * perStream);
        double share = units == 0 ? 0 : remaining / units;

        if (calibrationLine >= 0) {
            AlertRulesConfig.Calibration derived = CalibrationFalseAlarms.withDerivedBands(calibration, baseline,
                    windowShare, share / stepsPerYear, rules.budgetConfidence());
            calibration = derived != null ? derived : calibration;
            List<CalibrationFalseAlarms.Term> terms = CalibrationFalseAlarms.perStep(calibration, baseline, windowShare,
                    rules.budgetConfidence());
            double perStep = terms.stream().mapToDouble(CalibrationFalseAlarms.Term::perStep).sum();
            shares.add(calibrationLine, new Share(CalibrationRule.NAME, "calibration", "derived", stepsPerYear * perStep,
                    null, String.format(Locale.ROOT, "O/E [%.3f, %.3f], slope [%.3f, %.3f]; union bound: %.1f steps a"
                            + " year x %.2e per step (%s)", calibration.observedExpected().min(),
                            calibration.observedExpected().max(), calibration.slope().min(), calibration.slope().max(),
                            stepsPerYear, perStep, CalibrationFalseAlarms.describe(terms))));
        }
        for (int j : scoreDerived) {
            double k = scoreReference.get(j);
            double shift = Double.isFinite(baselineSteps) && baselineSteps > 0 ? quantile / Math.sqrt(baselineSteps) : 0;
            double target = stepsPerYear / share;
            String unreached = "";
            double h;
            try {
                h = CusumRunLength.normalTwoSidedLimit(target, k, shift);
            } catch (IllegalArgumentException e) {
                // a baseline so short that its error's quantile exceeds k: no limit keeps the guarantee;
                // take the limit for a known baseline and say so
                h = CusumRunLength.normalTwoSidedLimit(target, k, 0);
                unreached = "; NO GUARANTEE: the baseline period is too short for the confidence asked, limit for a"
                        + " known baseline";
                shift = 0;
            }
            double tau = Double.isFinite(baselineSteps) && baselineSteps > 0 ? 1 / Math.sqrt(baselineSteps) : 0;
            // h = max(h, the limit on average over the error): that limit is solved for only when it
            // is the larger (see CusumRunLength.largerLimit for why the result is the same)
            double averaged = CusumRunLength.normalTwoSidedOverError(h, k, tau, CusumRunLength.BUDGET_GRID);
            try {
                if (!(averaged >= target)) {
                    h = Math.max(h, CusumRunLength.normalTwoSidedLimitOverError(target, k, tau));
                    averaged = CusumRunLength.normalTwoSidedOverError(h, k, tau, CusumRunLength.BUDGET_GRID);
                }
            } catch (IllegalArgumentException e) {
                // k small against the baseline's error (a small stream): the baselines whose error
                // exceeds k drift to a signal whatever h, so no limit keeps the average; keep the
                // limit of the conditional guarantee and say so
                unreached += "; NO AVERAGE GUARANTEE: the baseline's error (sd " + String.format(Locale.ROOT, "%.3f", tau)
                        + ") is too large against k for any limit to keep the target on average over baselines";
            }
            scoreCharts.put(j, new ChartSettings(k, h));
            shares.add(new Share(OddsRatioCusumRule.NAME, columns.get(j).label(), "derived", share, h,
                    String.format(Locale.ROOT, "k %.3f; run length >= %.0f steps at an in-control shift of %.3f"
                            + " (its %.0f %% quantile from the baseline's error) and >= %.0f steps on average over"
                            + " that error (sd %.3f); %.0f steps with a known baseline",
                            k, target, shift, 100 * rules.budgetConfidence(), averaged, tau,
                            CusumRunLength.normalTwoSided(h, k, 0, CusumRunLength.BUDGET_GRID)) + unreached));
        }
        if (cusumDerived) {
            double q = quantile / Math.sqrt(baseline.events() * prevalence * (1 - prevalence));
            double target = eventsPerYear / share;
            String unreached = "";
            try {
                cusumLimit = largerBernoulliLimit(target, cusum, prevalence, Math.exp(q), Math.exp(-q));
            } catch (IllegalArgumentException e) {
                // too few baseline events for the confidence asked: the limit for a known baseline risk
                q = 0;
                cusumLimit = largerBernoulliLimit(target, cusum, prevalence, 1, 1);
                unreached = "; NO GUARANTEE: too few baseline events for the confidence asked, limit for a known risk";
            }
            shares.add(new Share(BernoulliCusumRule.UP, "all events", "derived", share, cusumLimit,
                    String.format(Locale.ROOT, "run length >= %.0f events at true odds x%.4f; %.0f events a year",
                            target, Math.exp(q), eventsPerYear) + unreached));
            shares.add(new Share(BernoulliCusumRule.DOWN, "all events", "derived", share, cusumLimit,
                    String.format(Locale.ROOT, "run length >= %.0f events at true odds x%.4f", target, Math.exp(-q))));
        }
        return new FalseAlarmBudget(shares, cusumLimit, Map.copyOf(scoreCharts), perStream, overspent, calibration);
    }

    private static double bernoulli(double h, double r, double prevalence, double trueMultiplier) {
        return CusumRunLength.bernoulli(h, r, new double[] {1}, new double[] {prevalence}, trueMultiplier,
                BERNOULLI_GRID);
    }

    /**
     * The larger of the up and down charts' limits, each the smallest h (to 0.01) whose Bernoulli
     * chart reaches {@code target} events (the up chart's at true odds x {@code upMultiplier}, the down
     * chart's at x {@code downMultiplier}); the down chart's is solved only when it is the larger
     * ({@link CusumRunLength#largerLimit}).
     */
    private static double largerBernoulliLimit(double target, Cusum cusum, double prevalence, double upMultiplier,
                                               double downMultiplier) {
        return CusumRunLength.largerLimit(h -> bernoulli(h, cusum.up(), prevalence, upMultiplier),
                h -> bernoulli(h, cusum.down(), prevalence, downMultiplier), target, 1, 0.01);
    }

    private static double periodMillis(BaselineModel baseline) {
        try {
            if (baseline.periodStart() == null || baseline.periodEnd() == null) {
                return Double.NaN;
            }
            double d = Instant.parse(baseline.periodEnd()).toEpochMilli() - Instant.parse(baseline.periodStart()).toEpochMilli();
            return d > 0 ? d : Double.NaN;
        } catch (DateTimeParseException e) {
            return Double.NaN;
        }
    }
}
