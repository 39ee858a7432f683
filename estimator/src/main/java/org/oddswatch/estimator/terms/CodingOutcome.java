package org.oddswatch.estimator.terms;

/**
 * The result of coding one raw value or one event.
 *
 * @param status OK, MISSING (accepted but left out of the fit) or REJECTED
 * @param term the name of the term concerned, or null for OK
 * @param reason a reason code such as {@code unknown-level} or {@code bad-value}, or null
 * @param detail a human-readable explanation, or null
 */
public record CodingOutcome(Status status, String term, String reason, String detail) {

    /** Coding outcomes. */
    public enum Status { OK, MISSING, REJECTED }

    /** Reason code: a categorical or binary value that is not a declared level. */
    public static final String UNKNOWN_LEVEL = "unknown-level";
    /** Reason code: a value of the wrong type, or a non-finite number. */
    public static final String BAD_VALUE = "bad-value";

    /** The shared success outcome (no allocation on the hot path). */
    public static final CodingOutcome OK = new CodingOutcome(Status.OK, null, null, null);

    public static CodingOutcome missing(String term, String detail) {
        return new CodingOutcome(Status.MISSING, term, null, detail);
    }

    public static CodingOutcome rejected(String term, String reason, String detail) {
        return new CodingOutcome(Status.REJECTED, term, reason, detail);
    }

    public boolean isOk() {
        return status == Status.OK;
    }

    public boolean isRejected() {
        return status == Status.REJECTED;
    }
}
