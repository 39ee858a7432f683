package org.oddswatch.estimator.terms;

import java.util.List;
import java.util.Objects;

/**
 * A two-level term coded as one 0/1 indicator: 1 for {@code level}, 0 for {@code reference}.
 * Besides the two labels, {@code true}/{@code false} and 1/0 are accepted. Other values follow
 * {@link UndeclaredLevelPolicy} ({@code POOL} is not meaningful here and acts as {@code REJECT}).
 */
public record BinaryTerm(String name, String level, String reference, UndeclaredLevelPolicy undeclared,
                         boolean watched) implements Term {

    public BinaryTerm {
        Objects.requireNonNull(name, "name");
        level = level == null ? "yes" : level;
        reference = reference == null ? "no" : reference;
        if (level.equals(reference)) {
            throw new IllegalArgumentException("term " + name + ": level and reference must differ");
        }
        undeclared = undeclared == null ? UndeclaredLevelPolicy.REJECT : undeclared;
    }

    @Override
    public List<Column> columns() {
        return List.of(new Column(name, level, reference, null, watched, true));
    }

    /** 1 for the level, 0 for the reference, -1 for anything else. */
    public int indicator(Object raw) {
        String text = LevelMatcher.asText(raw);
        if (text == null) {
            return -1;
        }
        if (text.equals(level) || text.equals("true") || text.equals("1")) {
            return 1;
        }
        if (text.equals(reference) || text.equals("false") || text.equals("0")) {
            return 0;
        }
        return -1;
    }

    @Override
    public CodingOutcome code(Object raw, double[] out, int offset) {
        if (raw == null) {
            return CodingOutcome.missing(name, "no value");
        }
        int value = indicator(raw);
        if (value < 0) {
            String detail = "'" + LevelMatcher.asText(raw) + "' is neither '" + level + "' nor '" + reference + "'";
            return undeclared == UndeclaredLevelPolicy.MISSING
                    ? CodingOutcome.missing(name, detail)
                    : CodingOutcome.rejected(name, CodingOutcome.UNKNOWN_LEVEL, detail);
        }
        out[offset] = value;
        return CodingOutcome.OK;
    }
}
