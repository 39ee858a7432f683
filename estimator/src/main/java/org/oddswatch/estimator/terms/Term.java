package org.oddswatch.estimator.terms;

import java.util.List;

/**
 * One model term as declared in a monitor definition. A term turns one raw event value into one or
 * more design-matrix columns. Raw values arrive as plain Java objects: {@code null} (absent),
 * {@link String}, {@link Boolean} or {@link Number}.
 */
public sealed interface Term permits BinaryTerm, CategoricalTerm, NumericTerm {

    /** The term's name, as reported in the {@code term} field of a coefficient. */
    String name();

    /** Whether the term's odds ratio is watched (profile intervals, LR test, alert rules). */
    boolean watched();

    /** The design columns this term contributes, in order. */
    List<Column> columns();

    /**
     * Writes this term's column values into {@code out} starting at {@code offset}.
     *
     * @return {@link CodingOutcome#OK}, a missing outcome (value absent, or an undeclared level under
     *     {@link UndeclaredLevelPolicy#MISSING}), or a rejection with a reason code
     */
    CodingOutcome code(Object raw, double[] out, int offset);
}
