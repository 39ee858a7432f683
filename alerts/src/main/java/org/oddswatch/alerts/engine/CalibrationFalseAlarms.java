package org.oddswatch.alerts.engine;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.RealMatrix;
import org.oddswatch.alerts.engine.AlertRulesConfig.Calibration;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * The calibration rule's false-alarm probability per window step in control, bounded by the union of
 * its tests (the rule signals when any one signals, so {@code P(signal) ≤ Σ P(test signals)}). Each
 * band test is charged the larger of two probabilities, the same two conditions the CUSUM limits are
 * held to ({@link FalseAlarmBudget}):
 * <pre>
 *   averaged over the baseline's error:          conditional, at the error's quantile q:
 *   O/E above:   1 − Φ((ln oeMax + z_c·s_w) / s)          1 − Φ((ln oeMax + z_c·s_w − q·s_b) / s_w)
 *   O/E below:   Φ((ln oeMin − z_c·s_w) / s)              Φ((ln oeMin − z_c·s_w + q·s_b) / s_w)
 *   slope above: 1 − Φ((slopeMax − 1 + slopeZ·t_w) / t)   1 − Φ((slopeMax − 1 + slopeZ·t_w − q·t_b) / t_w)
 *   slope below: Φ((slopeMin − 1 − slopeZ·t_w) / t)       Φ((slopeMin − 1 − slopeZ·t_w + q·t_b) / t_w)
 *   Hosmer–Lemeshow: its p limit (the rule's p-value already allows for the baseline's error)
 * </pre>
 * with {@code s_w = 1/sqrt(E_w)}, {@code s_b = 1/sqrt(cases_base)}, {@code s = sqrt(s_w² + s_b²)},
 * {@code t = sqrt(t_w² + t_b²)} and {@code q = Φ⁻¹(1 − α/2)}, {@code 1 − α} the budget's confidence.
 * The O/E interval is treated as a normal interval on the log scale ({@code z_c = 1.96}, the default
 * estimate level 0.95; the rule's exact Poisson interval is close to it at the window counts
 * monitored) with {@code E_w} the window's expected positives, the baseline's cases over its period
 * times the window's width. The calibration slope's standard error follows from the baseline's
 * information along its own linear predictor: the slope multiplies {@code η − β_0}, so its
 * information on the baseline's events is {@code β_s' V_ss⁻¹ β_s} ({@code β_s} the coefficients but
 * the intercept, {@code V_ss} their covariance; the intercept profiled out), scaled to a window by
 * its share of the baseline's events ({@code t_w}); {@code t_b} is that of the whole baseline.
 * The averaged column is the probability over both the window and the baseline, which is what the
 * expected number of false alarms needs (expectation is linear, so the union bound holds for it step
 * by step). The conditional column is the probability for a baseline whose error lies at its
 * {@code 1 − α/2} quantile against the test (the baseline's error is fixed for the stream's life, so
 * it shifts every window alike; guaranteed conditional performance, Gandy &amp; Kvaløy 2013): with
 * the larger of the two, the charge holds on average over baselines and, with probability
 * {@code 1 − α}, for the baseline the stream actually has. Pure.
 */
final class CalibrationFalseAlarms {

    /** The normal quantile of the default estimate level 0.95 that the O/E interval is taken at. */
    static final double OE_INTERVAL_Z = 1.959963984540054;
    private static final NormalDistribution STANDARD = new NormalDistribution(null, 0, 1);

    private CalibrationFalseAlarms() {
    }

    /**
     * One test's share of the bound.
     *
     * @param test the test in words
     * @param perStep its in-control signalling probability per window step
     */
    record Term(String test, double perStep) {
    }

    /**
     * The union bound's terms for one stream (see the class description); an empty list when the
     * baseline gives no expected positives per window.
     *
     * @param windowShare the window's events as a share of the baseline's (window width over the
     *     baseline's period)
     * @param confidence the budget's confidence {@code 1 − α} against the baseline's error
     */
    static List<Term> perStep(Calibration settings, BaselineModel baseline, double windowShare, double confidence) {
        List<Term> out = new ArrayList<>();
        double windowCases = baseline.cases() * windowShare;
        if (!(windowCases > 0) || !Double.isFinite(windowCases)) {
            return out;
        }
        Spread oe = Spread.observedExpected(baseline, windowShare, confidence);
        double oeMax = Math.log(settings.observedExpectedBand().max()) + OE_INTERVAL_Z * oe.window();
        double oeMin = Math.log(settings.observedExpectedBand().min()) - OE_INTERVAL_Z * oe.window();
        out.add(new Term("O/E above", oe.above(oeMax)));
        out.add(new Term("O/E below", oe.below(oeMin)));
        Spread slope = Spread.slope(baseline, windowShare, confidence);
        if (slope != null) {
            out.add(new Term("slope above", slope.above(settings.slopeBand().max() - 1 + settings.slopeZ() * slope.window())));
            out.add(new Term("slope below", slope.below(settings.slopeBand().min() - 1 - settings.slopeZ() * slope.window())));
        }
        out.add(new Term("Hosmer-Lemeshow", settings.hosmerLemeshowP()));
        return out;
    }

    /**
     * One band test's standard errors: the window's {@code w} ({@code s_w} or {@code t_w}), the
     * baseline's {@code b} ({@code s_b} or {@code t_b}), and the error quantile {@code q}.
     */
    private record Spread(double window, double baseline, double q) {

        /** The log O/E's; {@code q = Φ⁻¹(1 − α/2)} for the budget's confidence {@code 1 − α}. */
        static Spread observedExpected(BaselineModel model, double windowShare, double confidence) {
            return new Spread(1 / Math.sqrt(model.cases() * windowShare), 1 / Math.sqrt(model.cases()),
                    STANDARD.inverseCumulativeProbability(1 - (1 - confidence) / 2));
        }

        /** The calibration slope's, or null when the baseline gives no slope information. */
        static Spread slope(BaselineModel model, double windowShare, double confidence) {
            double information = slopeInformation(model);
            return information > 0 && Double.isFinite(information)
                    ? new Spread(1 / Math.sqrt(information * windowShare), 1 / Math.sqrt(information),
                            STANDARD.inverseCumulativeProbability(1 - (1 - confidence) / 2))
                    : null;
        }

        double both() {
            return Math.hypot(window, baseline);
        }

        /** P(a test signals above the band), {@code d} the band end's distance beyond the interval end. */
        double above(double d) {
            return Math.max(STANDARD.cumulativeProbability(-d / both()),
                    STANDARD.cumulativeProbability(-(d - q * baseline) / window));
        }

        /** P(a test signals below the band), {@code d} (negative) as for {@link #above}. */
        double below(double d) {
            return Math.max(STANDARD.cumulativeProbability(d / both()),
                    STANDARD.cumulativeProbability((d + q * baseline) / window));
        }

        /** The half-width {@code max(both·z_e, window·z_e + q·baseline)} that keeps a test at {@code Φ(−z_e)}. */
        double halfWidth(double ze) {
            return Math.max(both() * ze, window * ze + q * baseline);
        }
    }

    /**
     * The calibration settings with every band end the definition left out derived from a per-step
     * false-alarm budget {@code π} (the inverse of {@link #perStep}). The explicit parts (the
     * Hosmer–Lemeshow level and any given band end) are charged first; what remains, at least a tenth
     * of {@code π}, is split equally over the left-out ends, each getting {@code π_e} and
     * {@code z_e = Φ⁻¹(1 − π_e)}:
     * <pre>
     *   O/E max   = exp( m_o − z_c·s_w)      O/E min   = exp(z_c·s_w − m_o)      m_o = max(s·z_e, s_w·z_e + q·s_b)
     *   slope max = 1 + m_t − slopeZ·t_w     slope min = 1 − m_t + slopeZ·t_w   m_t = max(t·z_e, t_w·z_e + q·t_b)
     * </pre>
     * (solving each line of the class description's bound for its band end: the end must keep both
     * the averaged and the conditional probability at {@code π_e}, so the farther of the two ends). Each end stays at least
     * 0.01 (log scale for O/E) beyond 1, so a band never closes on the value in control; where that
     * floor binds, the end costs more than {@code π_e}, which {@link #perStep} of the result shows.
     * Slope ends fall back to the defaults where the baseline gives no slope information. Returns null
     * when the baseline gives no expected positives per window (the fallback bands then apply).
     *
     * @param perStepBudget {@code π}, the calibration's share of false alarms per window step
     * @param confidence the budget's confidence {@code 1 − α} against the baseline's error
     */
    static AlertRulesConfig.Calibration withDerivedBands(Calibration settings, BaselineModel baseline,
                                                         double windowShare, double perStepBudget, double confidence) {
        double windowCases = baseline.cases() * windowShare;
        if (!(windowCases > 0) || !Double.isFinite(windowCases) || !(perStepBudget > 0)) {
            return null;
        }
        AlertRulesConfig.Band oe = settings.observedExpected();
        AlertRulesConfig.Band slope = settings.slope();
        Spread oeSpread = Spread.observedExpected(baseline, windowShare, confidence);
        Spread slopeSpread = Spread.slope(baseline, windowShare, confidence);
        int leftOut = (oe.min() == null ? 1 : 0) + (oe.max() == null ? 1 : 0)
                + (slopeSpread != null ? (slope.min() == null ? 1 : 0) + (slope.max() == null ? 1 : 0) : 0);
        // what the explicit parts cost: perStep of the settings with the left-out ends at "never"
        AlertRulesConfig.Calibration explicitOnly = settings.withBands(new AlertRulesConfig.Band(1e-9, 1e9),
                new AlertRulesConfig.Band(-1e9, 1e9));
        double explicitCost = perStep(explicitOnly, baseline, windowShare, confidence).stream()
                .mapToDouble(Term::perStep).sum();
        double each = leftOut == 0 ? 0 : Math.max(perStepBudget - explicitCost, 0.1 * perStepBudget) / leftOut;
        double ze = leftOut == 0 ? 0 : STANDARD.inverseCumulativeProbability(1 - each);
        double logOe = Math.max(0.01, oeSpread.halfWidth(ze) - OE_INTERVAL_Z * oeSpread.window());
        AlertRulesConfig.Band oeBand = new AlertRulesConfig.Band(Math.exp(-logOe), Math.exp(logOe));
        AlertRulesConfig.Band slopeBand = new AlertRulesConfig.Band(AlertRulesConfig.SLOPE_FALLBACK_MIN,
                AlertRulesConfig.SLOPE_FALLBACK_MAX);
        if (slopeSpread != null) {
            double half = Math.max(0.01, slopeSpread.halfWidth(ze) - settings.slopeZ() * slopeSpread.window());
            slopeBand = new AlertRulesConfig.Band(1 - half, 1 + half);
        }
        return settings.withBands(oeBand, slopeBand);
    }

    /** The terms in words for the split: {@code O/E above 1.2e-05, ...}. */
    static String describe(List<Term> terms) {
        StringBuilder parts = new StringBuilder();
        for (Term t : terms) {
            parts.append(parts.length() == 0 ? "" : ", ").append(t.test())
                    .append(String.format(java.util.Locale.ROOT, " %.1e", t.perStep()));
        }
        return parts.toString();
    }

    /** {@code β_s' V_ss⁻¹ β_s}: the baseline's information on a slope multiplying its linear predictor; NaN if singular. */
    static double slopeInformation(BaselineModel baseline) {
        List<Integer> kept = new ArrayList<>();
        for (int j = 0; j < baseline.columns().size(); j++) {
            if (!baseline.columns().get(j).isIntercept()) {
                kept.add(j);
            }
        }
        int m = kept.size();
        if (m == 0) {
            return Double.NaN;
        }
        double[][] v = new double[m][m];
        double[] b = new double[m];
        for (int i = 0; i < m; i++) {
            b[i] = baseline.coefficients()[kept.get(i)];
            for (int l = 0; l < m; l++) {
                v[i][l] = baseline.covariance()[kept.get(i)][kept.get(l)];
            }
        }
        RealMatrix cov = MatrixUtils.createRealMatrix(v);
        LUDecomposition lu = new LUDecomposition(cov);
        if (!lu.getSolver().isNonSingular()) {
            return Double.NaN;
        }
        double[] solved = lu.getSolver().solve(MatrixUtils.createRealVector(b)).toArray();
        double info = 0;
        for (int i = 0; i < m; i++) {
            info += b[i] * solved[i];
        }
        return info;
    }
}
