package org.oddswatch.ingest.pipeline;

import java.time.Instant;

/**
 * One stream in {@code /status}.
 *
 * @param watermark largest event time seen, or null before the first event
 * @param lastFinalWindowEnd end of the newest final window, or null
 * @param finalWindows final windows estimated so far
 * @param baseline {@code none}, {@code file}, {@code accumulating}, {@code frozen} or {@code failed}
 * @param baselineNote why the baseline failed, or null
 * @param heldBuckets event-time buckets held in memory
 * @param approximateBytes approximate bytes of window state
 * @param heldFuture events held beyond the time horizon, waiting for evidence (a new frontier or not)
 */
public record StreamStatus(String stream, String monitor, Instant watermark, Instant lastFinalWindowEnd,
                           long finalWindows, String baseline, String baselineNote, int heldBuckets,
                           long approximateBytes, int heldFuture, OutcomeCounts.Snapshot counts) {
}
