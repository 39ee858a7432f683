package org.oddswatch.estimator.window;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.NavigableMap;
import java.util.TreeMap;
import org.oddswatch.estimator.fit.KnownGrouping;
import org.oddswatch.estimator.terms.DesignCoder;

/**
 * Per-stream event storage in event-time buckets (one bucket per window step). Expiring a bucket
 * costs O(bucket), not O(window). While a bucket's distinct covariate patterns stay at or below
 * {@code patternLimit}, it keeps (trials, positives) per pattern; past the limit it switches to
 * compact columnar rows in primitive arrays. Not thread-safe: one stream, one thread.
 *
 * <p>Storage per complete case in row mode: one long per 64 indicator columns, one double per
 * numeric column and one outcome bit (16.1 bytes for 10 indicator columns and one numeric term, at
 * full capacity; growth by half leaves up to a third unused). In pattern mode a bucket holds about
 * {@code 120 + 8 * keyLength} bytes per distinct pattern whatever the number of events.
 *
 * <p>{@link #window} lists, first, the patterns of all pattern-mode buckets merged and sorted by
 * their encoded key, then the rows of row-mode buckets in bucket order and, within a bucket, in
 * insertion order (for a bucket that switched, its patterns' rows in key order, positives first,
 * then later arrivals). The order depends only on the events and their arrival order, so a replay
 * of the same events gives byte-identical input to the fitter.
 */
public final class WindowStore {

    private final RowLayout layout;
    private final int patternLimit;
    private final int strata;
    private final NavigableMap<Long, Bucket> buckets = new TreeMap<>();
    /** The bucket the last event went to (null when none, or expired since). */
    private Bucket lastBucket;
    private long lastBucketNumber;
    private final long[] key;

    /**
     * @param coder the design coder rows come from (used to pack indicator columns compactly)
     * @param patternLimit most distinct patterns a bucket keeps as counts before switching to rows
     * @param strata number of levels of the stratifying term, 0 for none
     */
    public WindowStore(DesignCoder coder, int patternLimit, int strata) {
        if (patternLimit < 0 || strata < 0) {
            throw new IllegalArgumentException("pattern limit and strata must not be negative");
        }
        this.layout = new RowLayout(coder.columns());
        this.patternLimit = patternLimit;
        this.strata = strata;
        this.key = new long[layout.keyLength()];
    }

    /**
     * Adds one accepted event.
     *
     * @param bucket the event's bucket ({@link WindowGeometry#bucketOf(long)})
     * @param row the coded design row (intercept first), or null when a covariate is missing
     * @param positive the outcome
     * @param stratum level index of the stratifying term, or -1 when unknown or none
     * @throws IllegalArgumentException when the row has the wrong width, an indicator column holds
     *     something other than 0 or 1, a value is not finite, or the stratum is out of range; the
     *     store is left unchanged
     */
    public void add(long bucket, double[] row, boolean positive, int stratum) {
        if (stratum < -1 || stratum >= strata) {
            throw new IllegalArgumentException("stratum " + stratum + " outside 0.." + (strata - 1));
        }
        if (row != null) {
            layout.encode(row, key);
        }
        Bucket b = bucket == lastBucketNumber ? lastBucket : null;
        if (b == null) {
            // Consecutive events mostly fall in the same bucket: look it up only when it changes.
            b = buckets.computeIfAbsent(bucket, k -> new Bucket(layout, patternLimit, strata));
            lastBucketNumber = bucket;
            lastBucket = b;
        }
        b.countEvent(positive, stratum);
        if (row != null) {
            b.addComplete(key, positive);
        }
    }

    /** Drops every bucket before {@code bucket}. */
    public void expireBefore(long bucket) {
        buckets.headMap(bucket, false).clear();
        if (lastBucket != null && lastBucketNumber < bucket) {
            lastBucket = null;
        }
    }

    /** The content of buckets {@code [fromBucket, toBucket)}. */
    public WindowData window(long fromBucket, long toBucket) {
        Map<Long, Bucket> range = fromBucket < toBucket ? buckets.subMap(fromBucket, true, toBucket, false) : Map.of();
        long events = 0;
        long cases = 0;
        long[] stratumEvents = new long[strata];
        long[] stratumCases = new long[strata];
        TreeMap<PatternKey, long[]> merged = new TreeMap<>();
        List<Bucket> rowBuckets = new ArrayList<>();
        long rows = 0;
        for (Bucket b : range.values()) {
            events += b.events;
            cases += b.cases;
            for (int s = 0; s < strata; s++) {
                stratumEvents[s] += b.stratumEvents[s];
                stratumCases[s] += b.stratumCases[s];
            }
            if (b.inPatternMode()) {
                for (Map.Entry<PatternKey, Bucket.Counts> e : b.patterns().entrySet()) {
                    long[] sum = merged.computeIfAbsent(e.getKey(), k -> new long[2]);
                    sum[0] += e.getValue().trials;
                    sum[1] += e.getValue().positives;
                }
            } else {
                rowBuckets.add(b);
                rows += b.rowCount();
            }
        }
        rows += merged.size();
        int p = layout.width;
        if (rows * p > Integer.MAX_VALUE - 8) {
            throw new IllegalStateException("window too large for one design array: " + rows + " rows");
        }
        int n = (int) rows;
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        int i = 0;
        for (Map.Entry<PatternKey, long[]> e : merged.entrySet()) {
            layout.decode(e.getKey().bits, 0, null, 0, x, i * p);
            trials[i] = e.getValue()[0];
            positives[i] = e.getValue()[1];
            i++;
        }
        for (Bucket b : rowBuckets) {
            b.decodeRows(x, p, i, trials, positives);
            i += b.rowCount();
        }
        attachGrouping(x, trials, merged, rowBuckets, n);
        return new WindowData(p, n, x, trials, positives, events, cases, stratumEvents, stratumCases);
    }

    /** Windows from this many rows hand their indicator grouping to the fitters. */
    private static final int GROUPED_ROWS = 4096;

    /**
     * Hands the fitters the window's indicator grouping ({@link KnownGrouping}), taken from the
     * stored bits instead of the dense design: the intercept and the indicator columns are the 0/1
     * columns. Skipped for small windows, for more than 15 indicator columns or 4 numeric ones, and
     * when a numeric column happens to hold only 0 and 1 (the fitters would count it as 0/1).
     */
    private void attachGrouping(double[] x, double[] trials, TreeMap<PatternKey, long[]> merged, List<Bucket> rowBuckets,
                                int n) {
        int q = layout.numericColumns.length;
        int indicators = layout.indicatorColumns.length;
        if (n < GROUPED_ROWS || indicators + 1 > 16 || q > 4) {
            return;
        }
        int[] keys = new int[n];
        double[] z = new double[n * q];
        int i = 0;
        for (PatternKey k : merged.keySet()) {
            keys[i] = (int) (1L | (layout.words == 0 ? 0L : k.bits[0] << 1));
            for (int b = 0; b < q; b++) {
                z[i * q + b] = Double.longBitsToDouble(k.bits[layout.words + b]);
            }
            i++;
        }
        for (Bucket b : rowBuckets) {
            b.writeKeys(keys, z, i);
            i += b.rowCount();
        }
        for (int a = 0; a < q; a++) {
            boolean onlyZeroOne = true;
            for (int r = 0; r < n && onlyZeroOne; r++) {
                double v = z[r * q + a];
                onlyZeroOne = v == 0 || v == 1;
            }
            if (onlyZeroOne) {
                return;
            }
        }
        int[] binary = new int[indicators + 1];
        System.arraycopy(layout.indicatorColumns, 0, binary, 1, indicators);
        KnownGrouping.attach(x, layout.width, trials, binary, layout.numericColumns, keys, z);
    }

    /** The oldest bucket held, or {@link Long#MAX_VALUE} when empty. */
    public long oldestBucket() {
        return buckets.isEmpty() ? Long.MAX_VALUE : buckets.firstKey();
    }

    /** The oldest bucket held at or after {@code bucket}, or {@link Long#MAX_VALUE} when none. */
    public long oldestBucketFrom(long bucket) {
        Long held = buckets.ceilingKey(bucket);
        return held == null ? Long.MAX_VALUE : held;
    }

    /** The newest bucket held, or {@link Long#MIN_VALUE} when empty. */
    public long newestBucket() {
        return buckets.isEmpty() ? Long.MIN_VALUE : buckets.lastKey();
    }

    /** Number of buckets held. */
    public int bucketCount() {
        return buckets.size();
    }

    /** Whether bucket {@code b} is held and keeps rows rather than pattern counts. */
    public boolean isRowMode(long b) {
        Bucket bucket = buckets.get(b);
        return bucket != null && !bucket.inPatternMode();
    }

    /** Approximate bytes held, for the memory benchmark and a gauge. */
    public long approximateBytes() {
        long bytes = 64 + 64L * buckets.size();
        for (Bucket b : buckets.values()) {
            bytes += b.approximateBytes();
        }
        return bytes;
    }
}
