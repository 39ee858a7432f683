package org.oddswatch.estimator.terms;

/**
 * One design-matrix column: which term it belongs to and how its coefficient is labelled.
 *
 * @param term the term name ({@code intercept} for the constant column)
 * @param level the level this indicator stands for, or null for numeric terms and the intercept
 * @param reference the reference level, or null
 * @param per the unit of a numeric term's odds ratio (1 when not scaled), or null for indicators
 * @param watched whether the term is watched
 * @param indicator whether the column only takes the values 0 and 1
 */
public record Column(String term, String level, String reference, Double per, boolean watched, boolean indicator) {

    /** The label of the constant column. */
    public static final String INTERCEPT = "intercept";

    /** The constant column. */
    public static Column intercept() {
        return new Column(INTERCEPT, null, null, null, false, true);
    }

    /** Whether this is the constant column. */
    public boolean isIntercept() {
        return INTERCEPT.equals(term) && level == null;
    }

    /** A readable label, {@code term} or {@code term=level}. */
    public String label() {
        return level == null ? term : term + "=" + level;
    }
}
