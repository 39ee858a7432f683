package org.oddswatch.estimator.window;

import org.oddswatch.estimator.terms.DesignCoder;

/**
 * Per-stream event storage in event-time buckets (one bucket per window step). Expiring a bucket
 * costs O(bucket), not O(window). While a bucket's distinct covariate patterns stay at or below
 * {@code patternLimit}, it keeps (trials, positives) per pattern; past the limit it switches to
 * compact columnar rows in primitive arrays. Not thread-safe: one stream, one thread.
 */
public final class WindowStore {

    /**
     * @param coder the design coder rows come from (used to pack indicator columns compactly)
     * @param patternLimit most distinct patterns a bucket keeps as counts before switching to rows
     * @param strata number of levels of the stratifying term, 0 for none
     */
    public WindowStore(DesignCoder coder, int patternLimit, int strata) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * Adds one accepted event.
     *
     * @param bucket the event's bucket ({@link WindowGeometry#bucketOf(long)})
     * @param row the coded design row (intercept first), or null when a covariate is missing
     * @param positive the outcome
     * @param stratum level index of the stratifying term, or -1 when unknown or none
     */
    public void add(long bucket, double[] row, boolean positive, int stratum) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** Drops every bucket before {@code bucket}. */
    public void expireBefore(long bucket) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** The content of buckets {@code [fromBucket, toBucket)}. */
    public WindowData window(long fromBucket, long toBucket) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** The oldest bucket held, or {@link Long#MAX_VALUE} when empty. */
    public long oldestBucket() {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** The newest bucket held, or {@link Long#MIN_VALUE} when empty. */
    public long newestBucket() {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** Approximate bytes held, for the memory benchmark and a gauge. */
    public long approximateBytes() {
        throw new UnsupportedOperationException("not implemented yet");
    }
}
