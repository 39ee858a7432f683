package org.oddswatch.ingest.service;

import java.time.Duration;
import java.time.Instant;
import java.util.List;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * How far back in record time a partition must be re-read so the in-memory state at its committed
 * offset is rebuilt: every window still open there, and a fixed baseline period not yet (or no
 * longer, after a restart) in memory.
 *
 * <p>With {@code T} the timestamp of the record at the committed offset, the re-read starts at
 * <pre>
 *   min( T - max over monitors (width + step + lateness) - margin ,  min over fixed baselines (from) )
 * </pre>
 * The extra step makes the window before the first one emitted after the rebuild complete as well:
 * its coefficients are the warm start of the next fit, so they must be those of an uninterrupted run.
 * The events of windows still open at the committed offset have event times at or after
 * {@code W - width - lateness}, where {@code W} is the stream's watermark there. As long as records
 * are stamped at or after their event time, and {@code T - W} (how far record time runs ahead of
 * event time at the committed offset: the ingestion delay) stays within {@code margin}, every such
 * event lies at or after the start. The margin must therefore cover the largest ingestion delay.
 */
public record RebuildSpan(long lookBackMillis, Long baselineFromMillis) {

    /** The span of the monitors reading one topic. */
    public static RebuildSpan of(List<MonitorDefinition> monitors, Duration margin) {
        long lookBack = 0;
        Long baselineFrom = null;
        for (MonitorDefinition monitor : monitors) {
            lookBack = Math.max(lookBack, monitor.retentionMillis() + monitor.window().step().toMillis());
            if (monitor.baseline() != null && monitor.baseline().isFixedPeriod()) {
                long from = monitor.baseline().from().toEpochMilli();
                baselineFrom = baselineFrom == null ? from : Math.min(baselineFrom, from);
            }
        }
        return new RebuildSpan(lookBack + margin.toMillis(), baselineFrom);
    }

    /** The record time to start re-reading from, given the record time at the committed offset. */
    public long startMillis(long committedRecordMillis) {
        long start = committedRecordMillis - lookBackMillis;
        return baselineFromMillis == null ? start : Math.min(start, baselineFromMillis);
    }

    @Override
    public String toString() {
        return "look back " + Duration.ofMillis(lookBackMillis)
                + (baselineFromMillis == null ? "" : ", baseline from " + Instant.ofEpochMilli(baselineFromMillis));
    }
}
