package org.oddswatch.ingest.pipeline;

import java.util.List;

/**
 * The state of a pipeline for {@code /status}: totals by record, per monitor the records rejected
 * before a stream was known, and every stream.
 *
 * @param totals one outcome per record (a record read by several monitors counts once: accepted
 *     when any monitor accepted it, else the first monitor's outcome)
 * @param rebuilt records processed with output suppressed (state rebuild); not in the counts
 */
public record PipelineSnapshot(String input, OutcomeCounts.Snapshot totals, long rebuilt, List<MonitorStatus> monitors,
                               List<StreamStatus> streams) {

    /** Per monitor: counts of records that never reached a stream (parse errors, decode errors, cap). */
    public record MonitorStatus(String monitor, int streams, OutcomeCounts.Snapshot unrouted) {
    }
}
