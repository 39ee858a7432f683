package org.oddswatch.estimator.window;

import java.util.List;
import org.oddswatch.estimator.terms.Column;

/**
 * How a design row is stored compactly: indicator columns (0/1, the intercept excepted) as bits in
 * {@code words} longs, the other columns as doubles. Column 0, the intercept, is always 1 and is not
 * stored.
 */
final class RowLayout {

    final int width;
    final int[] indicatorColumns;
    final int[] numericColumns;
    final int words;

    RowLayout(List<Column> columns) {
        width = columns.size();
        int indicators = 0;
        for (int j = 1; j < width; j++) {
            if (columns.get(j).indicator()) {
                indicators++;
            }
        }
        indicatorColumns = new int[indicators];
        numericColumns = new int[width - 1 - indicators];
        for (int j = 1, a = 0, b = 0; j < width; j++) {
            if (columns.get(j).indicator()) {
                indicatorColumns[a++] = j;
            } else {
                numericColumns[b++] = j;
            }
        }
        words = (indicators + 63) / 64;
    }

    /** Length of a pattern key: the indicator words, then the raw bits of each numeric value. */
    int keyLength() {
        return words + numericColumns.length;
    }

    /** Writes the key of {@code row} into {@code key}. */
    void encode(double[] row, long[] key) {
        if (row.length != width) {
            throw new IllegalArgumentException("design row has " + row.length + " values, expected " + width);
        }
        java.util.Arrays.fill(key, 0, words, 0L);
        for (int a = 0; a < indicatorColumns.length; a++) {
            double v = row[indicatorColumns[a]];
            if (v == 1.0) {
                key[a >>> 6] |= 1L << (a & 63);
            } else if (v != 0.0) {
                throw new IllegalArgumentException("indicator column " + indicatorColumns[a] + " holds " + v);
            }
        }
        for (int b = 0; b < numericColumns.length; b++) {
            double v = row[numericColumns[b]];
            if (!Double.isFinite(v)) {
                throw new IllegalArgumentException("numeric column " + numericColumns[b] + " is not finite");
            }
            // +0.0 and -0.0 are the same value: store one bit pattern for both.
            key[words + b] = Double.doubleToLongBits(v == 0 ? 0.0 : v);
        }
    }

    /** Writes the design row of {@code key} (from {@code keyOffset}) into {@code x} at {@code xOffset}. */
    void decode(long[] key, int keyOffset, double[] numerics, int numericOffset, double[] x, int xOffset) {
        x[xOffset] = 1.0;
        for (int a = 0; a < indicatorColumns.length; a++) {
            x[xOffset + indicatorColumns[a]] = (key[keyOffset + (a >>> 6)] >>> (a & 63) & 1L) != 0 ? 1.0 : 0.0;
        }
        for (int b = 0; b < numericColumns.length; b++) {
            x[xOffset + numericColumns[b]] = numerics == null
                    ? Double.longBitsToDouble(key[keyOffset + words + b])
                    : numerics[numericOffset + b];
        }
    }
}
