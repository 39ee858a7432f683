package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.List;
import org.oddswatch.alerts.gaps.MonitoringGap;

/**
 * One stream in {@code /status}.
 *
 * @param watermark largest event time seen, or null before the first event
 * @param lastFinalWindowEnd end of the newest final window, or null
 * @param finalWindows final windows estimated so far
 * @param baseline {@code none}, {@code file}, {@code accumulating}, {@code frozen} or {@code failed}
 * @param baselineNote why the baseline failed, or why it is weak, or null
 * @param baselineEvents complete-case events of the baseline model in use, or null without one
 * @param baselinePositives positives among them, or null
 * @param heldBuckets event-time buckets held in memory
 * @param approximateBytes approximate bytes of window state
 * @param heldFuture events held beyond the time horizon, waiting for evidence (a new frontier or not)
 * @param gaps what is not monitored on this stream and why (empty when everything runs)
 */
public record StreamStatus(String stream, String monitor, Instant watermark, Instant lastFinalWindowEnd,
                           long finalWindows, String baseline, String baselineNote, Long baselineEvents,
                           Long baselinePositives, int heldBuckets, long approximateBytes, int heldFuture,
                           OutcomeCounts.Snapshot counts, List<MonitoringGap> gaps) {

    public StreamStatus {
        gaps = gaps == null ? List.of() : List.copyOf(gaps);
    }
}
