package org.oddswatch.deploy.scenario;

/**
 * What is wrong with a record injected for demonstrations ({@link ScenarioOptions#defectShare()}).
 * {@code NONE} marks a clean event. The labels say what a validating consumer should make of it.
 */
public enum RecordDefect {
    /** A clean event. */
    NONE("none"),
    /** Text cut short in the middle: not parseable JSON. */
    MALFORMED_JSON("malformed-json"),
    /** The result field holds a value that is neither positive nor negative. */
    BAD_OUTCOME("bad-outcome"),
    /** The event-time field is absent. */
    MISSING_TIME("missing-field"),
    /** The event-time field is not a time. */
    BAD_TIME("bad-time"),
    /** A valid event whose event time lies {@link ScenarioOptions#lateBy()} behind the feed. */
    LATE("late"),
    /** An exact copy of the clean event sent just before it (same id). */
    DUPLICATE("duplicate");

    private final String label;

    RecordDefect(String label) {
        this.label = label;
    }

    /** True for the defects a consumer should reject outright (not late, not duplicate). */
    public boolean rejected() {
        return this == MALFORMED_JSON || this == BAD_OUTCOME || this == MISSING_TIME || this == BAD_TIME;
    }

    @Override
    public String toString() {
        return label;
    }
}
