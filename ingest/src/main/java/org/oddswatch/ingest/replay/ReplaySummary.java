package org.oddswatch.ingest.replay;

import java.time.Instant;
import java.util.List;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/**
 * The content of {@code summary.json}. No wall-clock values, so it is byte-identical across runs.
 *
 * @param records counts by record: {@code consumed = accepted + rejected + late + duplicate}
 * @param finalWindows final window estimates written to estimates.jsonl
 * @param rejectsWritten lines of rejects.jsonl (rejected and late records)
 * @param monitors per monitor: records that never reached a stream
 * @param streams per stream: windows and counts
 */
public record ReplaySummary(String input, String format, Instant from, Instant to, OutcomeCounts.Snapshot records,
                            long finalWindows, long rejectsWritten, long alerts, List<Monitor> monitors,
                            List<Stream> streams) {

    /** What was not monitored and why, over every stream (the streams' own lists joined). */
    public List<MonitoringGap> gaps() {
        return streams.stream().flatMap(stream -> stream.gaps().stream()).toList();
    }

    /** Records of one monitor rejected before routing (parse and decode errors, stream cap, range). */
    public record Monitor(String monitor, int streams, OutcomeCounts.Snapshot unrouted) {
    }

    /**
     * @param windows final windows of the stream
     * @param firstWindowEnd end of its first final window, or null
     * @param lastWindowEnd end of its last final window, or null
     * @param baseline the baseline state at the end ({@code none}, {@code file}, {@code frozen}, ...)
     * @param baselineNote why the baseline failed or is weak, or null
     * @param gaps what was not monitored on the stream and why
     */
    public record Stream(String stream, long windows, Instant firstWindowEnd, Instant lastWindowEnd, String baseline,
                         String baselineNote, OutcomeCounts.Snapshot counts, List<MonitoringGap> gaps) {
    }
}
