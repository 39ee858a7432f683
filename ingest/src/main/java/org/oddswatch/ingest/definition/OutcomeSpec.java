package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.util.List;

/**
 * Where the outcome is and which values count as positive or negative. Values are compared in their
 * text form: strings as they are, booleans as {@code true}/{@code false}, whole numbers as digits.
 * Any other value is rejected {@code bad-outcome}.
 */
public record OutcomeSpec(JsonPointer field, List<String> positive, List<String> negative) {

    public OutcomeSpec {
        positive = List.copyOf(positive);
        negative = List.copyOf(negative);
    }
}
