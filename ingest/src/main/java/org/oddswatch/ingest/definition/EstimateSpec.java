package org.oddswatch.ingest.definition;

/**
 * The {@code estimates} section; {@code stratifyBy}, {@code sensitivity} and {@code specificity}
 * are null when not given.
 */
public record EstimateSpec(double level, String prevalenceInterval, String stratifyBy, double minEventsPerParameter,
                           Double sensitivity, Double specificity, int patternLimit, boolean profileIntervals) {
}
