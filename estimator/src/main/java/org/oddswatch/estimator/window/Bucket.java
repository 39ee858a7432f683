package org.oddswatch.estimator.window;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/**
 * One window step's events: prevalence counts for all accepted events, and the complete cases
 * either as counts per covariate pattern or, past the pattern limit, as columnar rows (indicator
 * words, numeric values, outcome bits) in growable primitive arrays.
 */
final class Bucket {

    /** Trials and positives of one covariate pattern. */
    static final class Counts {
        long trials;
        long positives;
    }

    private final RowLayout layout;
    private final int patternLimit;
    long events;
    long cases;
    final long[] stratumEvents;
    final long[] stratumCases;

    private Map<PatternKey, Counts> patterns = new HashMap<>();
    private long[] rowWords;
    private double[] rowNumerics;
    private long[] rowOutcomes;
    private int rowCount;

    Bucket(RowLayout layout, int patternLimit, int strata) {
        this.layout = layout;
        this.patternLimit = patternLimit;
        this.stratumEvents = new long[strata];
        this.stratumCases = new long[strata];
    }

    void countEvent(boolean positive, int stratum) {
        events++;
        if (positive) {
            cases++;
        }
        if (stratum >= 0) {
            stratumEvents[stratum]++;
            if (positive) {
                stratumCases[stratum]++;
            }
        }
    }

    /** Adds one complete case given its encoded key (the key array is copied when kept). */
    void addComplete(long[] key, boolean positive) {
        if (patterns != null) {
            PatternKey probe = new PatternKey(key);
            Counts counts = patterns.get(probe);
            if (counts == null && patterns.size() < patternLimit) {
                counts = new Counts();
                patterns.put(new PatternKey(key.clone()), counts);
            }
            if (counts != null) {
                counts.trials++;
                if (positive) {
                    counts.positives++;
                }
                return;
            }
            switchToRows();
        }
        appendRow(key, positive);
    }

    /** Expands the pattern counts into rows, patterns in key order, positives first. */
    private void switchToRows() {
        long total = 0;
        for (Counts c : patterns.values()) {
            total += c.trials;
        }
        int capacity = (int) Math.max(16, Math.min(Integer.MAX_VALUE - 8, total * 2));
        rowWords = new long[capacity * layout.words];
        rowNumerics = new double[capacity * layout.numericColumns.length];
        rowOutcomes = new long[(capacity + 63) / 64];
        for (PatternKey key : sortedPatterns()) {
            Counts c = patterns.get(key);
            for (long k = 0; k < c.trials; k++) {
                appendRow(key.bits, k < c.positives);
            }
        }
        patterns = null;
    }

    private void appendRow(long[] key, boolean positive) {
        int words = layout.words;
        int numerics = layout.numericColumns.length;
        if (rowCount == capacity()) {
            int grown = Math.max(16, rowCount + (rowCount >> 1));
            rowWords = Arrays.copyOf(rowWords, grown * words);
            rowNumerics = Arrays.copyOf(rowNumerics, grown * numerics);
            rowOutcomes = Arrays.copyOf(rowOutcomes, (grown + 63) / 64);
        }
        System.arraycopy(key, 0, rowWords, rowCount * words, words);
        for (int b = 0; b < numerics; b++) {
            rowNumerics[rowCount * numerics + b] = Double.longBitsToDouble(key[words + b]);
        }
        if (positive) {
            rowOutcomes[rowCount >>> 6] |= 1L << (rowCount & 63);
        }
        rowCount++;
    }

    private int capacity() {
        if (rowOutcomes == null) {
            return 0;
        }
        return layout.words > 0 ? rowWords.length / layout.words
                : layout.numericColumns.length > 0 ? rowNumerics.length / layout.numericColumns.length
                : rowOutcomes.length * 64;
    }

    boolean inPatternMode() {
        return patterns != null;
    }

    List<PatternKey> sortedPatterns() {
        List<PatternKey> keys = new ArrayList<>(patterns.keySet());
        keys.sort(null);
        return keys;
    }

    Map<PatternKey, Counts> patterns() {
        return patterns;
    }

    int rowCount() {
        return rowCount;
    }

    /**
     * Writes every stored row into a freshly zeroed design from row {@code first} (so only the ones
     * of the indicator bits need writing), with trials 1 and the row's outcome as positives.
     */
    void decodeRows(double[] x, int p, int first, double[] trials, double[] positives) {
        final int words = layout.words;
        final int q = layout.numericColumns.length;
        final int[] indicators = layout.indicatorColumns;
        final int[] numerics = layout.numericColumns;
        final long[] rw = rowWords;
        final double[] rn = rowNumerics;
        final long[] outcomes = rowOutcomes;
        for (int r = 0; r < rowCount; r++) {
            final int i = first + r;
            final int base = i * p;
            x[base] = 1.0;
            for (int w = 0; w < words; w++) {
                long bits = rw[r * words + w];
                while (bits != 0) {
                    x[base + indicators[(w << 6) + Long.numberOfTrailingZeros(bits)]] = 1.0;
                    bits &= bits - 1;
                }
            }
            for (int b = 0; b < q; b++) {
                x[base + numerics[b]] = rn[r * q + b];
            }
            trials[i] = 1;
            positives[i] = outcomes[r >>> 6] >>> (r & 63) & 1L;
        }
    }

    /**
     * Writes each stored row's pattern key (bit 0 for the intercept, then one bit per indicator
     * column; at most one indicator word) from row {@code first}, and copies its numeric values.
     */
    void writeKeys(int[] keys, double[] z, int first) {
        final int q = layout.numericColumns.length;
        if (layout.words == 1) {
            for (int r = 0; r < rowCount; r++) {
                keys[first + r] = (int) (1L | rowWords[r] << 1);
            }
        } else {
            java.util.Arrays.fill(keys, first, first + rowCount, 1);
        }
        System.arraycopy(rowNumerics, 0, z, first * q, rowCount * q);
    }

    /** Approximate heap bytes: arrays at capacity, or about 120 bytes per pattern entry plus its key. */
    long approximateBytes() {
        long bytes = 64 + 16L * stratumEvents.length;
        if (patterns != null) {
            bytes += 48 + patterns.size() * (120L + 8L * layout.keyLength());
        } else {
            bytes += 48 + 8L * rowWords.length + 8L * rowNumerics.length + 8L * rowOutcomes.length;
        }
        return bytes;
    }
}
