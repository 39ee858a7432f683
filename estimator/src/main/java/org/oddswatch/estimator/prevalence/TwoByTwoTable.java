package org.oddswatch.estimator.prevalence;

/**
 * Counts of a 2x2 table, rows by exposure and columns by outcome:
 * <pre>
 *              positive  negative
 *   exposed        a         b
 *   unexposed      c         d
 * </pre>
 * The odds ratio of the outcome, exposed versus unexposed, is {@code ad / bc}.
 */
public record TwoByTwoTable(long a, long b, long c, long d) {

    public TwoByTwoTable {
        if (a < 0 || b < 0 || c < 0 || d < 0) {
            throw new IllegalArgumentException(
                    "2x2 table counts must be non-negative, got a=" + a + " b=" + b + " c=" + c + " d=" + d);
        }
    }

    /** a + b + c + d. */
    public long total() {
        return a + b + c + d;
    }

    /** Whether any cell is zero. */
    public boolean hasZeroCell() {
        return a == 0 || b == 0 || c == 0 || d == 0;
    }

    /** Whether a whole row or column is zero (the table says nothing about the odds ratio). */
    public boolean hasEmptyMargin() {
        return a + b == 0 || c + d == 0 || a + c == 0 || b + d == 0;
    }
}
