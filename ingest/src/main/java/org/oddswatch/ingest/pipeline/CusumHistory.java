package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.HashMap;
import java.util.Map;
import java.util.NavigableMap;
import java.util.TreeMap;
import org.oddswatch.alerts.live.RecentFinals;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The published final estimates that carry CUSUM chart state ({@code cusum}, {@code stepCusum}), by
 * stream and window end, read back so that a restarted service continues its charts
 * ({@link MonitorPipeline#resumeCharts}); kept with their chart values only
 * ({@link WindowEstimate#chartsOnly}). Interim estimates and estimates without chart state are passed
 * over; a window read twice keeps the later copy.
 */
public final class CusumHistory {

    private final Map<String, NavigableMap<Instant, WindowEstimate>> byStream = new HashMap<>();

    /** Adds one published estimate; false when {@code json} is not an estimate. */
    public boolean add(byte[] json) {
        WindowEstimate e = RecentFinals.parse(json);
        if (e != null) {
            add(e);
        }
        return e != null;
    }

    /** Adds one published estimate already read (with a stream and a window end). */
    public void add(WindowEstimate e) {
        if (e.status() == WindowStatus.FINAL && (e.cusum() != null || e.stepCusum() != null)) {
            byStream.computeIfAbsent(e.stream(), s -> new TreeMap<>()).put(e.windowEnd(), e.chartsOnly());
        }
    }

    /** One stream's published estimates with chart state, by window end (empty when none). */
    public NavigableMap<Instant, WindowEstimate> of(String stream) {
        return byStream.getOrDefault(stream, new TreeMap<>());
    }
}
