package org.oddswatch.alerts.gaps;

import com.fasterxml.jackson.annotation.JsonValue;

/**
 * Why part of a stream is not monitored: a fixed set of codes, so they may be used as a meter tag.
 * The human reason (with figures) travels beside the code in {@link MonitoringGap#detail()}.
 */
public enum GapReason {
    /** The baseline model could not be fitted (no positives, no convergence, ...). */
    BASELINE_FAILED("baseline-failed"),
    /** The baseline was fitted from too little information ({@link BaselineInformation}); rules run on it. */
    BASELINE_WEAK("baseline-weak"),
    /** A frozen baseline file is missing, unreadable or fitted under another definition. */
    BASELINE_UNREADABLE("baseline-unreadable"),
    /** The fixed baseline period has not closed yet, so nothing is compared with it. */
    BASELINE_PENDING("baseline-pending"),
    /** The definition has no baseline section; rules comparing with a baseline cannot run. */
    NO_BASELINE("no-baseline"),
    /** The definition switches the rule off ({@code enabled: false}). */
    SWITCHED_OFF("switched-off"),
    /** The rule needs settings the definition does not give (bounds without bounded terms). */
    NOT_CONFIGURED("not-configured"),
    /** The window had no model fit (no complete events, or no events of one outcome). */
    NO_FIT("no-fit"),
    /** The window's fit state is not one the rule's guard accepts (not converged, separation, ...). */
    FIT_UNUSABLE("fit-unusable"),
    /** The window held fewer events than the rule's guard asks for. */
    TOO_FEW_EVENTS("too-few-events"),
    /** The figure the rule reads was not estimated (a dropped column, no calibration estimate). */
    NO_ESTIMATE("no-estimate"),
    /** The window overlaps the baseline period, whose events are the baseline itself. */
    BASELINE_PERIOD("baseline-period"),
    /** No accepted event of the stream has a value for the term. */
    TERM_MISSING("term-missing");

    private final String code;

    GapReason(String code) {
        this.code = code;
    }

    /** The code, as written in JSON and in the meter's {@code reason} tag. */
    @JsonValue
    public String code() {
        return code;
    }

    @Override
    public String toString() {
        return code;
    }
}
