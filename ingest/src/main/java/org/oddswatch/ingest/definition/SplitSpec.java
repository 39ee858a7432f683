package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;

/**
 * The {@code split} section: one stream per value of {@code field}, named {@code monitor/value}.
 *
 * @param maxStreams most streams of this monitor; events that would open another are rejected
 *     {@code too-many-streams} (default 64)
 */
public record SplitSpec(JsonPointer field, int maxStreams) {
}
