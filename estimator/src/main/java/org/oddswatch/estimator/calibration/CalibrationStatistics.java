package org.oddswatch.estimator.calibration;

import java.util.Arrays;
import java.util.Locale;
import java.util.function.Consumer;
import org.apache.commons.math3.distribution.GammaDistribution;
import org.apache.commons.math3.special.Gamma;
import org.oddswatch.estimator.EstimatorOptions;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.window.WindowData;

/**
 * Calibration of a frozen {@link BaselineModel} on one window's complete cases, computed from the
 * grouped rows of a {@link WindowData} (a covariate pattern with n_i trials and y_i positives, or a
 * single event). With {@code eta_i} the baseline linear predictor and {@code p_i} its risk:
 * <ul>
 *   <li><b>O / E</b>: {@code O = sum y_i}, {@code E = sum n_i p_i}; interval: the exact (Garwood)
 *       Poisson interval for O divided by E, lower {@code Gamma(alpha/2; O, 1)} (0 when O = 0), upper
 *       {@code Gamma(1 - alpha/2; O + 1, 1)}; the same as R's {@code poisson.test(O, T = E)}. E is
 *       treated as fixed (the baseline is frozen).</li>
 *   <li><b>Calibration intercept</b> (calibration-in-the-large, Van Calster et al. 2016): the intercept
 *       of a logistic fit with {@code eta_i} as offset. 0 when calibrated in the large.</li>
 *   <li><b>Calibration slope</b> (Cox 1958): the coefficient of {@code eta_i} in a logistic fit on
 *       {@code [1, eta_i]}. 1 when calibrated; below 1 when the baseline's risks are too extreme.</li>
 *   <li><b>Hosmer–Lemeshow</b> over 10 risk groups formed on individuals: let {@code Q(q)} be the
 *       smallest risk with at least a share q of individuals at or below it (the inverse empirical
 *       distribution, R's quantile type 1). Cut points {@code c_k = Q(k/10)}, k = 1..10; group k holds
 *       the risks in {@code (c_(k-1), c_k]}, duplicate cut points merged. Tied risks therefore always
 *       share a group and every group is non-empty; {@code hosmerLemeshowGroups} reports the g actually
 *       formed. Risks are tied when their linear predictors differ by at most 1e-9 (a tolerance, not
 *       exact equality: risks equal in exact arithmetic stay tied whatever order {@code x . beta} was
 *       summed in; see {@link RiskLevels}). Statistic
 *       {@code sum_k (O_k - E_k)² / (E_k (1 - E_k / n_k))}; p-value from chi-square with g - 2 degrees
 *       of freedom, null when g &lt; 3.</li>
 *   <li><b>Brier score</b>: {@code sum [y_i (1 - p_i)² + (n_i - y_i) p_i²] / N}.</li>
 *   <li><b>c-statistic</b>: the share of (positive, negative) pairs of individuals whose positive
 *       has the higher baseline risk, ties (the same tolerance) counting one half; from risk-sorted
 *       pattern counts in O(patterns log patterns).</li>
 * </ul>
 *
 * <p>Special cases (each a null field, never NaN or infinity, and a note): no complete-case events
 * (everything null); no positives or no negatives (intercept, slope and c-statistic null: the
 * maximum-likelihood fits do not exist); a single distinct baseline risk (slope null); baseline
 * risks that separate positives from negatives (slope null: its estimate is infinite); a fit that
 * does not converge within the iteration cap (that fit's fields null).
 */
public final class CalibrationStatistics {

    /** Number of risk groups the Hosmer–Lemeshow statistic aims for. */
    public static final int HOSMER_LEMESHOW_GROUPS = 10;

    private static final double QUANTILE_ACCURACY = 1e-12;

    private CalibrationStatistics() {
    }

    /** Calibration at {@code level}, with the default fit control, discarding notes. */
    public static CalibrationEstimate compute(WindowData data, BaselineModel baseline, double level) {
        return compute(data, baseline, level, FitControl.defaults(), note -> { });
    }

    /** Calibration at the options' level and iteration cap. */
    public static CalibrationEstimate compute(WindowData data, BaselineModel baseline, EstimatorOptions options,
                                              Consumer<String> notes) {
        return compute(data, baseline, options.level(), FitControl.defaults().withMaxIterations(
                options.maxIterations()), notes);
    }

    /**
     * @param notes receives plain-language notes for every statistic left null
     * @throws IllegalArgumentException when the baseline's columns do not match the window's design
     *     width, a baseline coefficient is not finite, or the level is not strictly between 0 and 1
     */
    public static CalibrationEstimate compute(WindowData data, BaselineModel baseline, double level,
                                              FitControl control, Consumer<String> notes) {
        if (!(level > 0 && level < 1)) {
            throw new IllegalArgumentException("confidence level must lie strictly between 0 and 1, got " + level);
        }
        double[] beta = baseline.coefficients();
        if (beta.length != data.columns()) {
            throw new IllegalArgumentException("baseline model has " + beta.length
                    + " columns but the window's design has " + data.columns());
        }
        for (double b : beta) {
            if (!Double.isFinite(b)) {
                throw new IllegalArgumentException("baseline model has a coefficient that is not finite");
            }
        }
        ScoredRows rows = ScoredRows.score(data, beta);
        long events = Math.round(rows.trials);
        long observed = Math.round(rows.positives);
        if (events == 0) {
            notes.accept("calibration not assessed: no complete-case events in the window");
            return new CalibrationEstimate(0, 0, null, null, null, null, null, null, null, null, null, null, null,
                    null, null);
        }
        boolean bothOutcomes = observed > 0 && observed < events;
        if (!bothOutcomes) {
            notes.accept("calibration intercept, slope and c-statistic not computable: the window has "
                    + (observed == 0 ? "no positives" : "no negatives"));
        }
        RiskLevels levels = RiskLevels.of(rows);

        Double expected = finite(rows.expected);
        Double oe = null;
        Double oeLower = null;
        Double oeUpper = null;
        if (rows.expected > 0) {
            double tail = (1 - level) / 2;
            oe = finite(observed / rows.expected);
            oeLower = finite(observed == 0 ? 0.0 : gammaQuantile(tail, observed) / rows.expected);
            oeUpper = finite(gammaQuantile(1 - tail, observed + 1) / rows.expected);
        } else {
            notes.accept("observed/expected not computable: the baseline expects no positives at all");
        }

        Double intercept = null;
        Double interceptSe = null;
        if (bothOutcomes) {
            FitResult fit = NewtonFitter.fit(new FitProblem(data.rows(), 1, ones(data.rows()), data.trials(),
                    data.positives(), rows.eta), new double[] {0.0}, control);
            if (usable(fit, 1)) {
                intercept = finite(fit.coefficients()[0]);
                interceptSe = finite(fit.standardError(0));
            } else {
                notes.accept("calibration intercept not computable: its fit did not converge");
            }
        }

        Double slope = null;
        Double slopeSe = null;
        if (bothOutcomes && levels.count() < 2) {
            notes.accept("calibration slope not computable: every event has the same baseline risk");
        } else if (bothOutcomes && rows.separates()) {
            notes.accept("calibration slope not computable: the baseline risk separates positives from "
                    + "negatives completely, so the slope estimate is infinite");
        } else if (bothOutcomes) {
            FitResult fit = NewtonFitter.fit(new FitProblem(data.rows(), 2, interleaveOnes(rows.eta), data.trials(),
                    data.positives(), null), new double[] {0.0, 1.0}, control);
            if (usable(fit, 2)) {
                slope = finite(fit.coefficients()[1]);
                slopeSe = finite(fit.standardError(1));
            } else {
                notes.accept("calibration slope not computable: its fit did not converge");
            }
        }

        HosmerLemeshow hl = HosmerLemeshow.of(levels, rows.trials, HOSMER_LEMESHOW_GROUPS);
        if (hl.statistic() == null) {
            notes.accept("Hosmer-Lemeshow statistic not computable: a risk group has all baseline risks at 0 or 1");
        } else if (hl.p() == null) {
            notes.accept(String.format(Locale.ROOT, "Hosmer-Lemeshow p-value not computed: only %d distinct "
                    + "risk group(s) could be formed (at least 3 needed)", hl.groups()));
        }
        Double brier = finite(rows.brierSum / rows.trials);
        Double c = bothOutcomes ? finite(levels.concordance()) : null;
        return new CalibrationEstimate(events, observed, expected, oe, oeLower, oeUpper, intercept, interceptSe, slope,
                slopeSe, hl.statistic(), hl.groups(), hl.p(), brier, c);
    }

    private static boolean usable(FitResult fit, int columns) {
        return fit.converged() && fit.covariance() != null && fit.dropped().length == 0
                && fit.coefficients().length == columns;
    }

    /** The q quantile of Gamma(shape, 1): the exact Poisson bounds. */
    private static double gammaQuantile(double q, double shape) {
        return new GammaDistribution(null, shape, 1.0, QUANTILE_ACCURACY).inverseCumulativeProbability(q);
    }

    private static double[] ones(int n) {
        double[] x = new double[n];
        Arrays.fill(x, 1.0);
        return x;
    }

    private static double[] interleaveOnes(double[] eta) {
        double[] x = new double[eta.length * 2];
        for (int i = 0; i < eta.length; i++) {
            x[2 * i] = 1.0;
            x[2 * i + 1] = eta[i];
        }
        return x;
    }

    static Double finite(double v) {
        return Double.isFinite(v) ? v : null;
    }

    /** Upper tail of chi-square with {@code df} degrees of freedom, computed directly (no 1 - cdf). */
    static double chiSquareUpperTail(double x, int df) {
        return Gamma.regularizedGammaQ(df / 2.0, x / 2.0);
    }
}
