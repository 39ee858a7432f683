package org.oddswatch.alerts.lifecycle;

/** What happened to an incident in one message; {@link #toString()} is the JSON label. */
public enum IncidentChange {
    /** The first episode of a new change was raised. */
    OPENED("opened"),
    /** An agreeing episode joined, or one of several episodes ended while others go on. */
    UPDATED("updated"),
    /** Every episode of the incident has ended. */
    RESOLVED("resolved");

    private final String label;

    IncidentChange(String label) {
        this.label = label;
    }

    @Override
    public String toString() {
        return label;
    }
}
