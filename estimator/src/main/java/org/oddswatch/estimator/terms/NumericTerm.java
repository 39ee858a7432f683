package org.oddswatch.estimator.terms;

import java.util.List;
import java.util.Objects;

/**
 * A numeric term entered linearly as {@code value / per}, so that {@code exp(coef)} is the odds
 * ratio per {@code per} units (for instance per 10 years). Numeric strings are accepted; a
 * non-numeric or non-finite value is rejected with {@code bad-value}.
 */
public record NumericTerm(String name, double per, boolean watched) implements Term {

    public NumericTerm {
        Objects.requireNonNull(name, "name");
        if (!(per > 0) || Double.isInfinite(per)) {
            throw new IllegalArgumentException("term " + name + ": per must be a positive finite number");
        }
    }

    @Override
    public List<Column> columns() {
        return List.of(new Column(name, null, null, per, watched, false));
    }

    @Override
    public CodingOutcome code(Object raw, double[] out, int offset) {
        if (raw == null) {
            return CodingOutcome.missing(name, "no value");
        }
        double value;
        if (raw instanceof Number n) {
            value = n.doubleValue();
        } else if (raw instanceof String s) {
            try {
                value = Double.parseDouble(s.trim());
            } catch (NumberFormatException e) {
                return CodingOutcome.rejected(name, CodingOutcome.BAD_VALUE, "'" + s + "' is not a number");
            }
        } else {
            return CodingOutcome.rejected(name, CodingOutcome.BAD_VALUE, "expected a number, got " + raw);
        }
        if (!Double.isFinite(value)) {
            return CodingOutcome.rejected(name, CodingOutcome.BAD_VALUE, "value is not finite");
        }
        out[offset] = value / per;
        return CodingOutcome.OK;
    }
}
