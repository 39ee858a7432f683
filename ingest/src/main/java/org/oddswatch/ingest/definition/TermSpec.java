package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import org.oddswatch.estimator.terms.Term;

/** One model term: the estimator's term and the event field it reads. */
public record TermSpec(JsonPointer field, Term term) {

    public String name() {
        return term.name();
    }
}
