package org.oddswatch.estimator.result;

/** Whether a window estimate may still change ({@code interim}) or not ({@code final}). */
public enum WindowStatus {
    INTERIM("interim"), FINAL("final");

    private final String label;

    WindowStatus(String label) {
        this.label = label;
    }

    /** The JSON label. */
    @Override
    public String toString() {
        return label;
    }
}
