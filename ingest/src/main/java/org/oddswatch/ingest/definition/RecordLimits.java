package org.oddswatch.ingest.definition;

/**
 * The {@code limits} section: larger record values are rejected {@code oversized} unparsed, deeper
 * nesting {@code too-deep}.
 */
public record RecordLimits(int maxRecordBytes, int maxDepth) {

    public static RecordLimits defaults() {
        return new RecordLimits(1 << 20, 32);
    }
}
