package org.oddswatch.estimator.prevalence;

import java.util.Arrays;
import java.util.stream.Collectors;

/**
 * How a binomial proportion's interval is computed; {@link #label()} (also {@link #toString()}) is
 * the JSON label used in {@code prevalence.method} and the {@code prevalenceInterval} option.
 */
public enum BinomialIntervalMethod {
    /** Wilson (1927) score interval, the default. */
    WILSON("wilson"),
    /** Clopper &amp; Pearson (1934) exact interval from beta quantiles. */
    CLOPPER_PEARSON("clopper-pearson"),
    /** Jeffreys interval: equal-tailed beta(x + 1/2, n - x + 1/2) posterior quantiles. */
    JEFFREYS("jeffreys");

    private final String label;

    BinomialIntervalMethod(String label) {
        this.label = label;
    }

    /** The JSON label. */
    public String label() {
        return label;
    }

    @Override
    public String toString() {
        return label;
    }

    /**
     * The method with JSON label {@code label}; null means the default, {@link #WILSON}.
     *
     * @throws IllegalArgumentException for any other label, listing the accepted ones
     */
    public static BinomialIntervalMethod fromLabel(String label) {
        if (label == null) {
            return WILSON;
        }
        for (BinomialIntervalMethod method : values()) {
            if (method.label.equals(label)) {
                return method;
            }
        }
        throw new IllegalArgumentException("unknown prevalence interval method '" + label + "'; expected one of "
                + Arrays.stream(values()).map(BinomialIntervalMethod::label).collect(Collectors.joining(", ")));
    }
}
