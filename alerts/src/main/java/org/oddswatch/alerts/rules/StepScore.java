package org.oddswatch.alerts.rules;

/**
 * The score statistic of one watched coefficient on one step's new events, against the baseline
 * model with the intercept re-estimated on those events.
 *
 * <p>Model: {@code logit p_i = o_i + a + delta x_ij}, where {@code o_i} is the baseline model's linear
 * predictor of event i (every coefficient at its baseline value), {@code a} shifts the intercept and
 * {@code delta} the watched coefficient. Under {@code delta = 0}, {@code a} is estimated by
 * Newton–Raphson from {@code sum y_i = sum expit(o_i + a)} (one parameter, so the step's sums are
 * all it needs). With {@code p_i = expit(o_i + a_hat)}, {@code w_i = p_i (1 - p_i)}:
 * <pre>
 *   U = sum x_ij (y_i - p_i)
 *   I = sum w_i x_ij^2 - (sum w_i x_ij)^2 / sum w_i     (information on delta with a profiled out)
 *   z = U / sqrt(I)
 * </pre>
 * In control z is approximately standard normal (Rao's score test; Cox &amp; Hinkley 1974, ch. 9),
 * and because the intercept is re-estimated a change in overall prevalence the baseline does not
 * expect moves it only through the small change of the weights: z measures the odds ratio.
 * Sums run in the order the events are added; the rule adds them in (event time, id) order, so the
 * result is byte-identical for the same events. Not thread-safe; one instance per chart, {@link #clear
 * cleared} for each step (it keeps its arrays, so a step's events cost no allocation once they fit).
 */
final class StepScore {

    private static final int MAX_ITERATIONS = 30;

    private double[] offset = new double[256];
    private double[] x = new double[256];
    private boolean[] y = new boolean[256];
    private int n;
    private long positives;

    /** Adds one event: its baseline linear predictor, its value of the watched column, its outcome. */
    void add(double linearPredictor, double column, boolean positive) {
        if (n == offset.length) {
            offset = java.util.Arrays.copyOf(offset, 2 * n);
            x = java.util.Arrays.copyOf(x, 2 * n);
            y = java.util.Arrays.copyOf(y, 2 * n);
        }
        offset[n] = linearPredictor;
        x[n] = column;
        y[n] = positive;
        n++;
        positives += positive ? 1 : 0;
    }

    /** Forgets the step's events (the next step starts empty). */
    void clear() {
        n = 0;
        positives = 0;
    }

    int events() {
        return n;
    }

    long positives() {
        return positives;
    }

    /**
     * The step's score for the watched coefficient.
     *
     * @param z the standardised score {@code U / sqrt(I)}
     * @param shift the one-step estimate {@code U / I} of the coefficient's change from its baseline
     *     value (one Newton step from the baseline; the step's odds ratio is about
     *     {@code exp(b_base + shift)})
     */
    record Score(double z, double shift) {
    }

    /**
     * The score as described in the class comment; null when it is undefined: no event, no positive
     * or no negative (the intercept has no finite estimate), or no information on the column (every
     * event has the same value of it).
     */
    Score score() {
        if (n == 0 || positives == 0 || positives == n) {
            return null;
        }
        double a = 0;
        for (int it = 0; it < MAX_ITERATIONS; it++) {
            double gradient = positives;
            double hessian = 0;
            for (int i = 0; i < n; i++) {
                double p = expit(offset[i] + a);
                gradient -= p;
                hessian += p * (1 - p);
            }
            double step = gradient / hessian;
            a += step;
            if (Math.abs(step) < 1e-10) {
                break;
            }
        }
        double u = 0;
        double sw = 0;
        double swx = 0;
        double swxx = 0;
        for (int i = 0; i < n; i++) {
            double p = expit(offset[i] + a);
            double w = p * (1 - p);
            u += x[i] * ((y[i] ? 1 : 0) - p);
            sw += w;
            swx += w * x[i];
            swxx += w * x[i] * x[i];
        }
        double information = swxx - swx * swx / sw;
        return information > 1e-12 * swxx && information > 0
                ? new Score(u / Math.sqrt(information), u / information) : null;
    }

    /**
     * The logistic function {@code 1 / (1 + exp(-eta))}, evaluated on the side where {@code exp}
     * cannot overflow; the same arithmetic as {@code BaselineModel.risk}, so a risk made from a
     * stored linear predictor equals the model's to the last bit.
     */
    static double expit(double eta) {
        return eta >= 0 ? 1 / (1 + Math.exp(-eta)) : Math.exp(eta) / (1 + Math.exp(eta));
    }
}
