package org.oddswatch.ingest.service;

/**
 * A kind of broker operation that failed and is tried again with exponential backoff: after
 * {@code n} failures in a row the next try waits {@code min(max, first * 2^(n-1))}. One success
 * ends the run of failures.
 */
final class BrokerRetry {

    private final long firstNanos;
    private final long maxNanos;
    private int failures;
    private long nextNanos;
    private long sinceNanos;
    private String reason;

    BrokerRetry(long firstNanos, long maxNanos) {
        this.firstNanos = firstNanos;
        this.maxNanos = maxNanos;
    }

    /** Whether the operation may be tried at {@code nowNanos}: not failing, or its backoff has passed. */
    boolean due(long nowNanos) {
        return failures == 0 || nowNanos - nextNanos >= 0;
    }

    /** @return true for the first failure of a run (the caller logs it once) */
    boolean failed(String why, long nowNanos) {
        if (failures++ == 0) {
            sinceNanos = nowNanos;
        }
        long delay = firstNanos << Math.min(failures - 1, 20);
        nextNanos = nowNanos + Math.min(maxNanos, delay < 0 ? maxNanos : delay);
        reason = why;
        return failures == 1;
    }

    /** @return nanoseconds since the first failure of the run that just ended, or -1 when none failed */
    long succeeded(long nowNanos) {
        if (failures == 0) {
            return -1;
        }
        failures = 0;
        reason = null;
        return nowNanos - sinceNanos;
    }

    /** Makes a failing operation due at once (the broker answers again), keeping its run of failures. */
    void retryNow(long nowNanos) {
        nextNanos = nowNanos;
    }

    boolean failing() {
        return failures > 0;
    }

    /** Why the last try failed, or null when not failing. */
    String reason() {
        return reason;
    }
}
