package org.oddswatch.estimator.prevalence;

import java.util.function.Consumer;
import org.oddswatch.estimator.result.AdjustedPrevalence;

/**
 * True prevalence from apparent prevalence given a test's sensitivity Se and specificity Sp
 * (Rogan &amp; Gladen 1978, <i>Am J Epidemiol</i> 107:71):
 * {@code pi = (p + Sp - 1) / (Se + Sp - 1)}.
 *
 * <p>Interval: the map is increasing in p when Se + Sp &gt; 1, so the apparent prevalence's interval
 * bounds (of whichever binomial method was chosen) are mapped through the same formula. This treats
 * Se and Sp as known constants; their own uncertainty is not propagated. The estimate and the bounds
 * are clipped to [0, 1]: an apparent prevalence below {@code 1 - Sp} (fewer positives than false
 * positives alone would give) maps below 0, one above {@code Se} maps above 1. Clipping sets
 * {@code clipped = true} and emits a note.
 */
public final class RoganGladen {

    private RoganGladen() {
    }

    /**
     * Adjusts an apparent prevalence; an undefined apparent prevalence (n = 0) gives null fields.
     *
     * @param notes receives a plain-language note when clipping happened
     * @throws IllegalArgumentException when Se or Sp lies outside [0, 1], or Se + Sp &lt;= 1 (the test
     *     is no better than chance and the formula does not identify the prevalence)
     */
    public static AdjustedPrevalence adjust(BinomialInterval apparent, double sensitivity, double specificity,
                                            Consumer<String> notes) {
        checkAccuracy(sensitivity, specificity);
        if (!apparent.isDefined()) {
            return new AdjustedPrevalence(null, null, null, sensitivity, specificity, false);
        }
        double value = unclipped(apparent.estimate(), sensitivity, specificity);
        double lower = unclipped(apparent.lower(), sensitivity, specificity);
        double upper = unclipped(apparent.upper(), sensitivity, specificity);
        boolean clipped = outside(value) || outside(lower) || outside(upper);
        if (clipped) {
            notes.accept(String.format(java.util.Locale.ROOT,
                    "Rogan-Gladen true prevalence clipped to [0, 1]: apparent prevalence %.4g (interval %.4g-%.4g) "
                            + "lies partly outside [1 - specificity, sensitivity] = [%.4g, %.4g], which the assumed "
                            + "test accuracy cannot explain; check the sensitivity and specificity used",
                    apparent.estimate(), apparent.lower(), apparent.upper(), 1 - specificity, sensitivity));
        }
        return new AdjustedPrevalence(clip(value), clip(lower), clip(upper), sensitivity, specificity, clipped);
    }

    /** The unclipped Rogan–Gladen value {@code (p + Sp - 1) / (Se + Sp - 1)}. */
    public static double unclipped(double apparent, double sensitivity, double specificity) {
        checkAccuracy(sensitivity, specificity);
        return (apparent + specificity - 1) / (sensitivity + specificity - 1);
    }

    private static void checkAccuracy(double sensitivity, double specificity) {
        if (!(sensitivity >= 0 && sensitivity <= 1) || !(specificity >= 0 && specificity <= 1)) {
            throw new IllegalArgumentException("sensitivity and specificity must lie in [0, 1], got sensitivity "
                    + sensitivity + " and specificity " + specificity);
        }
        if (sensitivity + specificity <= 1) {
            throw new IllegalArgumentException("Rogan-Gladen adjustment needs sensitivity + specificity > 1 "
                    + "(a test better than chance), got sensitivity " + sensitivity + " + specificity "
                    + specificity + " = " + (sensitivity + specificity));
        }
    }

    private static boolean outside(double v) {
        return v < 0 || v > 1;
    }

    private static double clip(double v) {
        return Math.min(1.0, Math.max(0.0, v));
    }
}
