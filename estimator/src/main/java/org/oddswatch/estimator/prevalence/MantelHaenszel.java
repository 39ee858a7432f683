package org.oddswatch.estimator.prevalence;

import java.util.ArrayList;
import java.util.List;

/**
 * The Mantel–Haenszel (1959) common odds ratio over 2x2 strata,
 * {@code OR = sum(R_k) / sum(S_k)} with {@code R_k = a_k d_k / n_k} and {@code S_k = b_k c_k / n_k},
 * and the Robins, Breslow &amp; Greenland (1986) variance of its logarithm, with
 * {@code P_k = (a_k + d_k) / n_k} and {@code Q_k = (b_k + c_k) / n_k}:
 * <pre>
 *   var(log OR) = sum(P R) / (2 R+²) + sum(P S + Q R) / (2 R+ S+) + sum(Q S) / (2 S+²)
 * </pre>
 * The interval is {@code exp(log OR ± z·sqrt(var))}; this is what R's {@code mantelhaen.test}
 * reports for 2x2xK tables (without the exact option).
 *
 * <p>Zero cells need no correction: a stratum with {@code ad = bc = 0} (including an empty one, or
 * one with a single event) adds nothing to any sum and is skipped; the count of skipped strata is
 * noted. When {@code sum(R) = 0} or {@code sum(S) = 0} the common odds ratio is 0 or infinite and
 * every value is null with a note.
 */
public final class MantelHaenszel {

    /** The {@code method} label of a Mantel–Haenszel estimate. */
    public static final String METHOD = "mantel-haenszel";

    private MantelHaenszel() {
    }

    /**
     * @throws IllegalArgumentException when {@code level} is not strictly between 0 and 1
     */
    public static OddsRatioEstimate commonOddsRatio(List<TwoByTwoTable> strata, double level) {
        Quantiles.checkLevel(level);
        double sumR = 0;
        double sumS = 0;
        double sumPR = 0;
        double sumPSQR = 0;
        double sumQS = 0;
        int used = 0;
        for (TwoByTwoTable t : strata) {
            double n = t.total();
            double r = (double) t.a() * t.d() / Math.max(n, 1);
            double s = (double) t.b() * t.c() / Math.max(n, 1);
            if (r == 0 && s == 0) {
                continue;
            }
            used++;
            double p = (t.a() + t.d()) / n;
            double q = (t.b() + t.c()) / n;
            sumR += r;
            sumS += s;
            sumPR += p * r;
            sumPSQR += p * s + q * r;
            sumQS += q * s;
        }
        List<String> notes = new ArrayList<>();
        int skipped = strata.size() - used;
        if (skipped > 0) {
            notes.add(skipped + " of " + strata.size()
                    + " strata carry no information on the odds ratio (ad = bc = 0) and were skipped");
        }
        if (sumR == 0 || sumS == 0) {
            notes.add(used == 0
                    ? "Mantel-Haenszel odds ratio not computable: no stratum carries information"
                    : "Mantel-Haenszel odds ratio not computable: it would be " + (sumR == 0 ? "0" : "infinite")
                            + " (every informative stratum has " + (sumR == 0 ? "ad = 0" : "bc = 0") + ")");
            return OddsRatioEstimate.undefined(level, METHOD, strata.size(), used, notes);
        }
        double variance = sumPR / (2 * sumR * sumR) + sumPSQR / (2 * sumR * sumS) + sumQS / (2 * sumS * sumS);
        return OddsRatioEstimate.onLogScale(Math.log(sumR / sumS), Math.sqrt(variance), level, METHOD, false,
                strata.size(), used, notes);
    }
}
