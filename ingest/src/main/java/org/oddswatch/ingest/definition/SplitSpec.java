package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;

/** The {@code split} section: one stream per value of {@code field}, at most {@code maxStreams}. */
public record SplitSpec(JsonPointer field, int maxStreams) {
}
