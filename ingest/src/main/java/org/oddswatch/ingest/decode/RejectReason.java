package org.oddswatch.ingest.decode;

import org.oddswatch.estimator.terms.CodingOutcome;

/**
 * Reason codes of rejected records (kebab-case, stable: they appear in rejects, counts and meters).
 */
public final class RejectReason {

    /** The value is not valid JSON (or not valid UTF-8), or has content after the first value. */
    public static final String MALFORMED_JSON = "malformed-json";
    /** A CSV line that does not fit the header (wrong number of columns, broken quoting). */
    public static final String MALFORMED_CSV = "malformed-csv";
    /** The value is valid JSON but not an object. */
    public static final String NOT_AN_OBJECT = "not-an-object";
    /** The value is larger than {@code limits.maxRecordBytes}; it is not parsed. */
    public static final String OVERSIZED = "oversized";
    /** Objects and arrays nest deeper than {@code limits.maxDepth}. */
    public static final String TOO_DEEP = "too-deep";
    /** The event id, time, outcome or split field is absent, null or empty. */
    public static final String MISSING_FIELD = "missing-field";
    /** The event id (or split value) is an object or array instead of text or a number. */
    public static final String BAD_ID = "bad-id";
    /** The outcome is none of the configured positive or negative values. */
    public static final String BAD_OUTCOME = "bad-outcome";
    /** The time is neither RFC 3339 text nor whole epoch milliseconds. */
    public static final String BAD_TIME = "bad-time";
    /** The time is later than the stream's watermark plus {@code event.maxFutureSkew}. */
    public static final String TOO_FAR_IN_FUTURE = "too-far-in-future";
    /** A binary or categorical value that is not declared (with {@code undeclared: reject}). */
    public static final String UNKNOWN_LEVEL = CodingOutcome.UNKNOWN_LEVEL;
    /** A term value of the wrong type: not a number for a numeric term, an object or array. */
    public static final String BAD_VALUE = CodingOutcome.BAD_VALUE;
    /** The split value would open more streams than {@code split.maxStreams}. */
    public static final String TOO_MANY_STREAMS = "too-many-streams";
    /** Outcome reason of late records: their bucket's first window is already final. */
    public static final String LATE = "late";
    /** Outcome reason of duplicates: the id was already seen in a bucket still held. */
    public static final String DUPLICATE = "duplicate";

    private RejectReason() {
    }
}
