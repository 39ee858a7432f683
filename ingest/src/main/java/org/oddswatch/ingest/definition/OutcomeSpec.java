package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.util.List;

/**
 * Where the outcome is and which values count as positive or negative, compared as text (booleans
 * as {@code true}/{@code false}, whole numbers as digits); any other value is rejected {@code bad-outcome}.
 */
public record OutcomeSpec(JsonPointer field, List<String> positive, List<String> negative) {

    public OutcomeSpec {
        positive = List.copyOf(positive);
        negative = List.copyOf(negative);
    }
}
