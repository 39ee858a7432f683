package org.oddswatch.estimator.window;

import java.util.Arrays;

/**
 * An encoded covariate pattern ({@link RowLayout#encode}), usable as a hash key and ordered
 * lexicographically by its longs (unsigned), so that merged windows list patterns in an order that
 * depends only on the data.
 */
final class PatternKey implements Comparable<PatternKey> {

    final long[] bits;
    private final int hash;

    PatternKey(long[] bits) {
        this.bits = bits;
        this.hash = Arrays.hashCode(bits);
    }

    @Override
    public boolean equals(Object other) {
        return other instanceof PatternKey k && hash == k.hash && Arrays.equals(bits, k.bits);
    }

    @Override
    public int hashCode() {
        return hash;
    }

    @Override
    public int compareTo(PatternKey other) {
        for (int k = 0; k < bits.length; k++) {
            int c = Long.compareUnsigned(bits[k], other.bits[k]);
            if (c != 0) {
                return c;
            }
        }
        return 0;
    }
}
