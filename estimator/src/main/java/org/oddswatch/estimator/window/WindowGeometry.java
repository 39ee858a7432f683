package org.oddswatch.estimator.window;

import java.time.Instant;

/**
 * Event-time window arithmetic. Time is split into buckets of one {@code step}; bucket {@code b}
 * covers {@code [align + b*step, align + (b+1)*step)}. A window is {@code width/step} consecutive
 * buckets and is named by its exclusive end bucket {@code e}: it covers buckets {@code [e-k, e)},
 * i.e. the half-open interval {@code [windowStart, windowEnd)} whose end falls on a multiple of the
 * step counted from {@code align} (1970-01-01T00:00Z by default).
 *
 * @param widthMillis window width; a positive multiple of the step
 * @param stepMillis window step (bucket width)
 * @param alignMillis the instant bucket boundaries are counted from
 * @param latenessMillis how long after a window's end its events are still accepted
 */
public record WindowGeometry(long widthMillis, long stepMillis, long alignMillis, long latenessMillis) {

    public WindowGeometry {
        if (stepMillis <= 0 || widthMillis <= 0 || widthMillis % stepMillis != 0) {
            throw new IllegalArgumentException("window width must be a positive multiple of the step");
        }
        if (latenessMillis < 0) {
            throw new IllegalArgumentException("allowed lateness must not be negative");
        }
    }

    /** Buckets per window, {@code width / step}. */
    public int bucketsPerWindow() {
        return (int) (widthMillis / stepMillis);
    }

    /** The bucket holding event time {@code t}: {@code floor((t - align) / step)}. */
    public long bucketOf(long t) {
        return Math.floorDiv(t - alignMillis, stepMillis);
    }

    /** Start of bucket {@code b}. */
    public long bucketStart(long b) {
        return alignMillis + b * stepMillis;
    }

    /** First bucket of the window whose exclusive end bucket is {@code endBucket}. */
    public long firstBucketOf(long endBucket) {
        return endBucket - bucketsPerWindow();
    }

    public Instant windowStart(long endBucket) {
        return Instant.ofEpochMilli(bucketStart(firstBucketOf(endBucket)));
    }

    public Instant windowEnd(long endBucket) {
        return Instant.ofEpochMilli(bucketStart(endBucket));
    }

    /**
     * Whether the window ending at {@code endBucket} is final at watermark {@code w}: the watermark
     * has passed {@code windowEnd + lateness}.
     */
    public boolean isFinal(long endBucket, long watermark) {
        return watermark >= bucketStart(endBucket) + latenessMillis;
    }
}
