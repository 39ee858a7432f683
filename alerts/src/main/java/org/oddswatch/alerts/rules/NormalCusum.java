package org.oddswatch.alerts.rules;

/**
 * Two-sided tabular CUSUM for a normal mean (Page 1954; the tabular form of Montgomery's
 * <i>Introduction to Statistical Quality Control</i>), on standardised values
 * {@code x = (value - target) / sigma}: {@code C+ = max(0, C+ + x - k)},
 * {@code C- = max(0, C- - x - k)}; signal when either exceeds {@code h}. Both sides are
 * {@link CusumChart}s, the same code path as the Bernoulli chart; both restart at 0 after a signal.
 */
public final class NormalCusum {

    private final double target;
    private final double sigma;
    private final double reference;
    private final CusumChart upper;
    private final CusumChart lower;

    /**
     * @param target the in-control mean
     * @param sigma the in-control standard deviation
     * @param reference k, in units of sigma (0.5 tunes the chart to a one-sigma shift)
     * @param limit h, in units of sigma
     */
    public NormalCusum(double target, double sigma, double reference, double limit) {
        if (!(sigma > 0) || !(reference >= 0)) {
            throw new IllegalArgumentException("sigma must be positive and k non-negative");
        }
        this.target = target;
        this.sigma = sigma;
        this.reference = reference;
        this.upper = new CusumChart(limit);
        this.lower = new CusumChart(limit);
    }

    /** Which side signalled after one observation. */
    public enum Signal { NONE, UP, DOWN }

    /** Adds one observation; on a signal both sides restart at 0. */
    public Signal add(double value) {
        double x = (value - target) / sigma;
        boolean up = upper.add(x - reference);
        boolean down = lower.add(-x - reference);
        if (up || down) {
            Signal s = up && (!down || upper.value() >= lower.value()) ? Signal.UP : Signal.DOWN;
            upper.reset();
            lower.reset();
            return s;
        }
        return Signal.NONE;
    }

    public double upperValue() {
        return upper.value();
    }

    public double lowerValue() {
        return lower.value();
    }
}
