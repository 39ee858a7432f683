package org.oddswatch.estimator.prevalence;

import java.util.List;

/**
 * The odds ratio of one 2x2 table, {@code ad / bc}, with Woolf's (1955) interval on the log scale:
 * {@code se(log OR) = sqrt(1/a + 1/b + 1/c + 1/d)}, bounds {@code exp(log OR ± z·se)}.
 *
 * <p>Zero cells: only when some cell is zero, 0.5 is added to all four cells (Haldane 1956) before
 * both the estimate and the standard error are computed, {@code corrected = true}, and a note says
 * so. A table with a whole row or column empty carries no information about the odds ratio: every
 * value is null and a note says why.
 */
public final class OddsRatio2x2 {

    /** The {@code method} label of a single-table estimate. */
    public static final String WOOLF = "woolf";

    private OddsRatio2x2() {
    }

    /**
     * @throws IllegalArgumentException when {@code level} is not strictly between 0 and 1
     */
    public static OddsRatioEstimate woolf(TwoByTwoTable table, double level) {
        Quantiles.checkLevel(level);
        if (table.hasEmptyMargin()) {
            return OddsRatioEstimate.undefined(level, WOOLF, 1, 0, List.of(
                    "odds ratio not computable: a whole row or column of the 2x2 table is empty " + describe(table)));
        }
        boolean corrected = table.hasZeroCell();
        double shift = corrected ? 0.5 : 0.0;
        double a = table.a() + shift;
        double b = table.b() + shift;
        double c = table.c() + shift;
        double d = table.d() + shift;
        double logOr = Math.log(a) + Math.log(d) - Math.log(b) - Math.log(c);
        double logSe = Math.sqrt(1 / a + 1 / b + 1 / c + 1 / d);
        List<String> notes = corrected
                ? List.of("a cell of the 2x2 table is zero " + describe(table)
                        + ": 0.5 added to every cell (Haldane correction) for the odds ratio and its interval")
                : List.of();
        return OddsRatioEstimate.onLogScale(logOr, logSe, level, WOOLF, corrected, 1, 1, notes);
    }

    static String describe(TwoByTwoTable t) {
        return "(a=" + t.a() + ", b=" + t.b() + ", c=" + t.c() + ", d=" + t.d() + ")";
    }
}
