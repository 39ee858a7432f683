package org.oddswatch.alerts.rules;

/**
 * One-sided tabular CUSUM (Page 1954): {@code S_t = max(0, S_{t-1} + W_t)}, signalling when
 * {@code S_t > h}. The increments {@code W_t} are supplied by the caller: a log-likelihood ratio for
 * the Bernoulli chart, a standardised deviation minus the reference value for the normal chart.
 * After a signal the caller decides whether to {@link #reset()}; both charts here restart at 0.
 */
public final class CusumChart {

    private final double limit;
    private double value;

    /** @param limit the decision limit h, positive */
    public CusumChart(double limit) {
        if (!(limit > 0)) {
            throw new IllegalArgumentException("decision limit must be positive");
        }
        this.limit = limit;
    }

    /** Adds one increment; returns whether the chart is now above the limit. */
    public boolean add(double increment) {
        value = Math.max(0.0, value + increment);
        return value > limit;
    }

    public double value() {
        return value;
    }

    public double limit() {
        return limit;
    }

    /**
     * Sets the statistic to a value the chart had before (continuing a chart after a restart).
     *
     * @throws IllegalArgumentException when {@code value} is negative or not finite
     */
    public void resume(double value) {
        if (!(value >= 0) || !Double.isFinite(value)) {
            throw new IllegalArgumentException("a CUSUM value is finite and non-negative: " + value);
        }
        this.value = value;
    }

    /** Restarts the chart at 0 (after a signal). */
    public void reset() {
        value = 0.0;
    }
}
