package org.oddswatch.estimator.fit;

/** The likelihood that was maximised; {@link #toString()} is the JSON label of {@code fit.method}. */
public enum FitMethod {
    NEWTON("newton"), FIRTH("firth");

    private final String label;

    FitMethod(String label) {
        this.label = label;
    }

    @Override
    public String toString() {
        return label;
    }
}
