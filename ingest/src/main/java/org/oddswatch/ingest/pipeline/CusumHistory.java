package org.oddswatch.ingest.pipeline;

import java.io.IOException;
import java.time.Instant;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.NavigableMap;
import java.util.TreeMap;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.StepCusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The CUSUM values of published final estimates (Bernoulli charts and odds-ratio step charts) by
 * stream and window end, read back so that a restarted service continues its charts ({@link MonitorPipeline#resumeCharts}). Interim estimates
 * and estimates without CUSUM values are passed over; a window read twice keeps the later copy.
 */
public final class CusumHistory {

    private final Map<String, NavigableMap<Instant, List<CusumValue>>> byStream = new HashMap<>();
    private final Map<String, NavigableMap<Instant, List<StepCusumValue>>> stepsByStream = new HashMap<>();

    /** Adds one published estimate; false when {@code json} is not an estimate. */
    public boolean add(byte[] json) {
        WindowEstimate e;
        try {
            e = Json.mapper().readValue(json, WindowEstimate.class);
        } catch (IOException | RuntimeException ex) {
            return false;
        }
        boolean estimate = e != null && e.stream() != null && e.windowEnd() != null;
        if (estimate && e.status() == WindowStatus.FINAL && e.cusum() != null) {
            byStream.computeIfAbsent(e.stream(), s -> new TreeMap<>()).put(e.windowEnd(), e.cusum());
        }
        if (estimate && e.status() == WindowStatus.FINAL && e.stepCusum() != null) {
            stepsByStream.computeIfAbsent(e.stream(), s -> new TreeMap<>()).put(e.windowEnd(), e.stepCusum());
        }
        return estimate;
    }

    /** One stream's Bernoulli CUSUM values by window end (empty when none). */
    public NavigableMap<Instant, List<CusumValue>> of(String stream) {
        return byStream.getOrDefault(stream, new TreeMap<>());
    }

    /** One stream's step CUSUM values by window end (empty when none). */
    public NavigableMap<Instant, List<StepCusumValue>> stepsOf(String stream) {
        return stepsByStream.getOrDefault(stream, new TreeMap<>());
    }
}
