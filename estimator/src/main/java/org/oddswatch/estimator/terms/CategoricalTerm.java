package org.oddswatch.estimator.terms;

import java.util.ArrayList;
import java.util.List;
import java.util.Objects;

/**
 * A categorical term with declared levels and a reference level: one indicator column per
 * non-reference level, in declared order. Values outside the declared levels follow
 * {@link UndeclaredLevelPolicy}; under {@code POOL} they count as {@code catchAll}, which must be
 * one of the declared levels.
 */
public record CategoricalTerm(String name, List<String> levels, String reference, UndeclaredLevelPolicy undeclared,
                              String catchAll, boolean watched) implements Term {

    public CategoricalTerm {
        Objects.requireNonNull(name, "name");
        levels = List.copyOf(levels);
        if (levels.size() < 2) {
            throw new IllegalArgumentException("term " + name + ": a categorical term needs at least two levels");
        }
        if (levels.stream().distinct().count() != levels.size()) {
            throw new IllegalArgumentException("term " + name + ": levels must be distinct");
        }
        if (!levels.contains(reference)) {
            throw new IllegalArgumentException("term " + name + ": reference level '" + reference + "' is not declared");
        }
        undeclared = undeclared == null ? UndeclaredLevelPolicy.REJECT : undeclared;
        if (undeclared == UndeclaredLevelPolicy.POOL && !levels.contains(catchAll)) {
            throw new IllegalArgumentException("term " + name + ": catch-all level '" + catchAll + "' is not declared");
        }
    }

    @Override
    public List<Column> columns() {
        List<Column> columns = new ArrayList<>(levels.size() - 1);
        for (String level : levels) {
            if (!level.equals(reference)) {
                columns.add(new Column(name, level, reference, null, watched, true));
            }
        }
        return columns;
    }

    /** Index of the declared level {@code raw} codes to (after pooling), or -1 if missing or undeclared. */
    public int levelIndex(Object raw) {
        int index = LevelMatcher.indexOf(levels, raw);
        if (index < 0 && raw != null && undeclared == UndeclaredLevelPolicy.POOL) {
            index = levels.indexOf(catchAll);
        }
        return index;
    }

    @Override
    public CodingOutcome code(Object raw, double[] out, int offset) {
        if (raw == null) {
            return CodingOutcome.missing(name, "no value");
        }
        int index = levelIndex(raw);
        if (index < 0) {
            String detail = "'" + LevelMatcher.asText(raw) + "' is not a declared level of " + name;
            return undeclared == UndeclaredLevelPolicy.MISSING
                    ? CodingOutcome.missing(name, detail)
                    : CodingOutcome.rejected(name, CodingOutcome.UNKNOWN_LEVEL, detail);
        }
        int column = offset;
        for (int i = 0; i < levels.size(); i++) {
            if (!levels.get(i).equals(reference)) {
                out[column++] = i == index ? 1.0 : 0.0;
            }
        }
        return CodingOutcome.OK;
    }
}
