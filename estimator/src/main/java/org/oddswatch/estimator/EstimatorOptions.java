package org.oddswatch.estimator;

/**
 * Settings of a {@link WindowEstimator}. Build with {@link #defaults()} and the {@code with...}
 * methods.
 *
 * @param level confidence level of all intervals (default 0.95)
 * @param minEventsPerParameter outcome events (the rarer outcome) per model parameter below which
 *     the fit is flagged {@code too-few-events} (default 10, Peduzzi et al. 1996)
 * @param maxIterations Newton iteration cap (default 25)
 * @param prevalenceInterval {@code wilson} (default), {@code clopper-pearson} or {@code jeffreys}
 * @param stratifyBy name of the categorical term prevalence is broken down by, or null
 * @param sensitivity test sensitivity for Rogan–Gladen adjustment, or null
 * @param specificity test specificity, or null
 * @param profileIntervals whether watched terms get profile-likelihood intervals and LR tests
 */
public record EstimatorOptions(double level, double minEventsPerParameter, int maxIterations, String prevalenceInterval,
                               String stratifyBy, Double sensitivity, Double specificity, boolean profileIntervals) {

    public static EstimatorOptions defaults() {
        return new EstimatorOptions(0.95, 10, 25, "wilson", null, null, null, true);
    }

    public EstimatorOptions withLevel(double value) {
        return new EstimatorOptions(value, minEventsPerParameter, maxIterations, prevalenceInterval, stratifyBy,
                sensitivity, specificity, profileIntervals);
    }

    public EstimatorOptions withMinEventsPerParameter(double value) {
        return new EstimatorOptions(level, value, maxIterations, prevalenceInterval, stratifyBy, sensitivity,
                specificity, profileIntervals);
    }

    public EstimatorOptions withPrevalenceInterval(String value) {
        return new EstimatorOptions(level, minEventsPerParameter, maxIterations, value, stratifyBy, sensitivity,
                specificity, profileIntervals);
    }

    public EstimatorOptions withStratifyBy(String value) {
        return new EstimatorOptions(level, minEventsPerParameter, maxIterations, prevalenceInterval, value, sensitivity,
                specificity, profileIntervals);
    }

    public EstimatorOptions withTestAccuracy(double sens, double spec) {
        return new EstimatorOptions(level, minEventsPerParameter, maxIterations, prevalenceInterval, stratifyBy, sens,
                spec, profileIntervals);
    }

    public EstimatorOptions withProfileIntervals(boolean value) {
        return new EstimatorOptions(level, minEventsPerParameter, maxIterations, prevalenceInterval, stratifyBy,
                sensitivity, specificity, value);
    }
}
