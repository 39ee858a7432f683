package org.oddswatch.ingest.definition;

/**
 * The {@code limits} section: caps applied to every record before and while it is parsed.
 *
 * @param maxRecordBytes larger record values are rejected {@code oversized} unparsed (default 1 MiB)
 * @param maxDepth deeper nesting of objects and arrays is rejected {@code too-deep} (default 32)
 */
public record RecordLimits(int maxRecordBytes, int maxDepth) {

    public static RecordLimits defaults() {
        return new RecordLimits(1 << 20, 32);
    }
}
