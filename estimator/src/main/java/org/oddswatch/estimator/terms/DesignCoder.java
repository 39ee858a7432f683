package org.oddswatch.estimator.terms;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;

/**
 * Codes one event's raw term values into a design row. Column 0 is always the intercept (1.0);
 * the terms' columns follow in declaration order. Instances are immutable and thread-safe.
 */
public final class DesignCoder {

    private final List<Term> terms;
    private final List<Column> columns;
    private final int[] offsets;

    public DesignCoder(List<? extends Term> terms) {
        this.terms = List.copyOf(terms);
        List<Column> all = new ArrayList<>();
        all.add(Column.intercept());
        offsets = new int[this.terms.size()];
        for (int t = 0; t < this.terms.size(); t++) {
            offsets[t] = all.size();
            all.addAll(this.terms.get(t).columns());
        }
        this.columns = Collections.unmodifiableList(all);
        long distinct = this.terms.stream().map(Term::name).distinct().count();
        if (distinct != this.terms.size()) {
            throw new IllegalArgumentException("term names must be distinct");
        }
    }

    public List<Term> terms() {
        return terms;
    }

    /** All design columns, the intercept first. */
    public List<Column> columns() {
        return columns;
    }

    /** Number of design columns, including the intercept. */
    public int width() {
        return columns.size();
    }

    /** Index of the first column of term {@code t}. */
    public int offsetOf(int t) {
        return offsets[t];
    }

    /** Index of the term with this name, or -1. */
    public int termIndex(String name) {
        for (int t = 0; t < terms.size(); t++) {
            if (terms.get(t).name().equals(name)) {
                return t;
            }
        }
        return -1;
    }

    /**
     * Codes one event. {@code raw[t]} is the raw value of term {@code t}; {@code row} must have
     * length {@link #width()}. The first term that is rejected decides the outcome; otherwise the
     * first missing one does. On a non-OK outcome the contents of {@code row} are unspecified.
     */
    public CodingOutcome code(Object[] raw, double[] row) {
        if (raw.length != terms.size() || row.length != columns.size()) {
            throw new IllegalArgumentException("expected " + terms.size() + " values and a row of " + columns.size());
        }
        row[0] = 1.0;
        CodingOutcome missing = null;
        for (int t = 0; t < terms.size(); t++) {
            CodingOutcome outcome = terms.get(t).code(raw[t], row, offsets[t]);
            if (outcome.isRejected()) {
                return outcome;
            }
            if (!outcome.isOk() && missing == null) {
                missing = outcome;
            }
        }
        return missing == null ? CodingOutcome.OK : missing;
    }
}
