package org.oddswatch.ingest.service;

import java.time.Duration;
import java.time.Instant;
import java.util.List;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * How far back in record time a partition is re-read to rebuild its in-memory state: from
 * {@code min(T - max over monitors (width + step + lateness) - margin, min over fixed baselines (from))},
 * {@code T} the timestamp of the record at the committed offset. The margin must cover the ingestion
 * delay (ingest/KAFKA.md, "State rebuild").
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
