package org.oddswatch.estimator.fit;

/** Outcome of a window's model fit; {@link #toString()} is the JSON label of {@code fit.state}. */
public enum FitState {
    /** Maximum likelihood (or Firth) estimates found. */
    CONVERGED("converged"),
    /** Complete or quasi-complete separation: ML estimates do not exist; Firth estimates reported. */
    SEPARATION("separation"),
    /** Aliased columns were dropped (named in {@code dropped}) and the rest fitted. */
    RANK_DEFICIENT("rank-deficient"),
    /** Fewer outcome events per parameter than required; estimates reported but flagged. */
    TOO_FEW_EVENTS("too-few-events"),
    /** The iteration stopped without meeting a convergence rule (cap, no improvement beyond rounding, singular information), also after a cold restart. */
    NOT_CONVERGED("not-converged"),
    /** Empty window, or no positives, or no negatives: prevalence only. */
    NO_MODEL("no-model");

    private final String label;

    FitState(String label) {
        this.label = label;
    }

    @Override
    public String toString() {
        return label;
    }
}
