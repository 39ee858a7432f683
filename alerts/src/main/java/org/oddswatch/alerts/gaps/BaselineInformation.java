package org.oddswatch.alerts.gaps;

import java.util.Locale;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * Whether a baseline model rests on enough information: at least {@value #PER_COEFFICIENT} events
 * of the rarer outcome per estimated coefficient besides the intercept,
 * <pre>
 *   min(positives, negatives) &gt;= 10 &middot; max(1, p - 1)
 * </pre>
 * over the complete-case events the model was fitted on ({@code p} columns, intercept included).
 * Below that, the coefficients and their standard errors of a logistic model are known to be
 * biased and unstable, and a baseline that every later window is compared with must not be.
 *
 * <p>The rule of ten events per variable is from Peduzzi P, Concato J, Kemper E, Holford TR,
 * Feinstein AR. A simulation study of the number of events per variable in logistic regression
 * analysis. J Clin Epidemiol. 1996;49(12):1373-1379. Example: 68 events of which 3 positive, with
 * 2 coefficients besides the intercept, need 20 of the rarer outcome and have 3: weak. The reason
 * names the total and the rarer outcome's count only (withheld as {@code <5} from 1 to 4), so it
 * can be shown wherever the baseline is.
 */
public final class BaselineInformation {

    /** Events of the rarer outcome needed per coefficient besides the intercept. */
    public static final int PER_COEFFICIENT = 10;

    private BaselineInformation() {
    }

    /** A count from 1 to 4 as {@code <5} (the small-cell rule of every output), else the count. */
    public static String withheld(long n) {
        return n > 0 && n < 5 ? "<5" : Long.toString(n);
    }

    /** Why {@code model} rests on too little information, or null when it has enough. */
    public static String weakness(BaselineModel model) {
        return weakness(model.events(), model.cases(), model.coefficients().length);
    }

    /**
     * Why a fit on {@code events} complete events with {@code positives} positives and
     * {@code coefficients} columns (intercept included) rests on too little information, or null.
     */
    public static String weakness(long events, long positives, int coefficients) {
        long negatives = events - positives;
        long rarer = Math.min(positives, negatives);
        int slopes = Math.max(1, coefficients - 1);
        long needed = (long) PER_COEFFICIENT * slopes;
        if (rarer >= needed) {
            return null;
        }
        return String.format(Locale.ROOT, "too little information: %d events, of which %s %s, for %d coefficient(s) "
                + "besides the intercept; at least %d of the rarer outcome (%d per coefficient) are needed",
                events, withheld(rarer), positives <= negatives ? "positive" : "negative", slopes, needed,
                PER_COEFFICIENT);
    }
}
