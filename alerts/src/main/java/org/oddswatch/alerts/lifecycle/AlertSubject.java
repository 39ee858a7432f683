package org.oddswatch.alerts.lifecycle;

/**
 * What an alert is about: a watched term and level, or the calibration of the baseline model
 * ({@code term = "calibration"}, level null).
 */
public record AlertSubject(String term, String level) {

    public static final String CALIBRATION = "calibration";

    public static AlertSubject calibration() {
        return new AlertSubject(CALIBRATION, null);
    }

    /** {@code term} or {@code term=level}. */
    public String label() {
        return level == null ? term : term + "=" + level;
    }
}
