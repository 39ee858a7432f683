package org.oddswatch.alerts.lifecycle;

/** Where an alert episode stands; {@link #toString()} is the JSON label. */
public enum AlertState {
    RAISED("raised"), CONTINUING("continuing"), CLEARED("cleared");

    private final String label;

    AlertState(String label) {
        this.label = label;
    }

    @Override
    public String toString() {
        return label;
    }
}
