package org.oddswatch.estimator.terms;

/** What a categorical or binary term does with a value that is not one of its declared levels. */
public enum UndeclaredLevelPolicy {
    /** The event is rejected with reason {@code unknown-level}. */
    REJECT,
    /** The event is accepted for prevalence and left out of the model fit (complete cases). */
    MISSING,
    /** The value is counted under the term's declared catch-all level. */
    POOL
}
