package org.oddswatch.alerts.rules;

/**
 * The figure a reading compares with its limit: which measure it is, its value, and on which side
 * of the limit it lies. Alert messages carry it as {@code measure}, {@code value} and
 * {@code direction}, so a reader never has to guess whether a number is an odds ratio, a p-value or a
 * chart statistic.
 *
 * @param measure the measure's name, one of the constants of this class
 * @param value its value in this reading, or null when it could not be computed
 * @param side where the value lies relative to the raise limit, or null when the reading is not
 *     beyond it
 */
public record Measurement(String measure, Double value, Side side) {

    /** Drift z of a watched log odds ratio against the baseline: {@code (b_now - b_base) / sqrt(se_now² + se_base²)}. */
    public static final String ODDS_RATIO_Z = "odds-ratio-z";
    /** A watched odds ratio (point estimate; the rule judges its interval against fixed bounds). */
    public static final String ODDS_RATIO = "odds-ratio";
    /** Observed over expected positives under the baseline model (point estimate; judged by its interval). */
    public static final String OBSERVED_EXPECTED = "observed-expected-ratio";
    /** Calibration slope of the baseline model's linear predictor (point estimate; judged by its Wald interval). */
    public static final String CALIBRATION_SLOPE = "calibration-slope";
    /** Hosmer–Lemeshow p-value of the baseline model on the window (g degrees of freedom). */
    public static final String HOSMER_LEMESHOW_P = "hosmer-lemeshow-p";
    /** Risk-adjusted Bernoulli CUSUM: cumulative log-likelihood ratio of the chart. */
    public static final String CUSUM_LLR = "cusum-log-likelihood-ratio";
    /** Two-sided CUSUM of each step's score statistic for a watched coefficient ({@code OddsRatioCusumRule}). */
    public static final String ODDS_RATIO_CUSUM = "odds-ratio-score-cusum";

    /** Where a value lies relative to a limit; {@link #toString()} is the JSON label. */
    public enum Side {
        /** At or beyond the raise limit on its upper side. */
        ABOVE("above"),
        /** At or beyond the raise limit on its lower side. */
        BELOW("below"),
        /** Back inside the clear limit (cleared messages). */
        WITHIN("within");

        private final String label;

        Side(String label) {
            this.label = label;
        }

        @Override
        public String toString() {
            return label;
        }
    }

    /** Words for a measure name, for message texts; the name itself when unknown. */
    public static String words(String measure) {
        if (measure == null) {
            return "the statistic";
        }
        return switch (measure) {
            case ODDS_RATIO_Z -> "the drift z of the odds ratio against the baseline";
            case ODDS_RATIO -> "the odds ratio";
            case OBSERVED_EXPECTED -> "the ratio of observed to expected positives";
            case CALIBRATION_SLOPE -> "the calibration slope";
            case HOSMER_LEMESHOW_P -> "the Hosmer-Lemeshow p-value";
            case CUSUM_LLR -> "the CUSUM log-likelihood ratio";
            case ODDS_RATIO_CUSUM -> "the CUSUM of the odds ratio's step scores";
            default -> measure;
        };
    }

    /** The value formatted for its measure: two decimals for z and chart statistics, else three significant decimals. */
    public static String format(String measure, Double value) {
        return ODDS_RATIO_Z.equals(measure) || CUSUM_LLR.equals(measure) || ODDS_RATIO_CUSUM.equals(measure) ? Format.stat(value) : Format.num(value);
    }
}
