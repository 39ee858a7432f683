package org.oddswatch.ingest.pipeline;

import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;

/**
 * Opens the streams of one pipeline, each with what a restart restored for it before it was seen
 * (open alert episodes, CUSUM values).
 */
final class StreamFactory {

    private final PipelineListener listener;
    private final PipelineSettings settings;
    private final StreamState.HeldOutcomes heldOutcomes;
    /** Restored alerts of streams not opened yet, by stream name. */
    private final Map<String, List<Alert>> pendingRestore = new LinkedHashMap<>();
    /** CUSUM values to resume the charts of streams not opened yet from, and the rebuild's re-read start. */
    private CusumHistory chartHistory;
    private long chartsRereadFrom;

    StreamFactory(PipelineListener listener, PipelineSettings settings, StreamState.HeldOutcomes heldOutcomes) {
        this.listener = listener;
        this.settings = settings;
        this.heldOutcomes = heldOutcomes;
    }

    /** A new stream of {@code route}. */
    StreamState open(MonitorRoute route, String name, String splitValue) {
        StreamState stream = new StreamState(name, route.monitor, route.estimator, route.newStore(),
                route.baseline(name, splitValue, settings), listener, heldOutcomes);
        List<Alert> restore = pendingRestore.remove(name);
        if (restore != null) {
            restore(stream, restore);
        }
        if (chartHistory != null) {
            stream.resumeCharts(chartHistory.of(name), chartsRereadFrom);
        }
        return stream;
    }

    /** See {@link MonitorPipeline#restoreAlerts}; {@code streams}: the streams open now, by name. */
    void restoreAlerts(List<Alert> published, Map<String, StreamState> streams) {
        Map<String, List<Alert>> byStream = new LinkedHashMap<>();
        for (Alert alert : published) {
            byStream.computeIfAbsent(alert.stream(), s -> new ArrayList<>()).add(alert);
        }
        byStream.forEach((name, alerts) -> {
            StreamState stream = streams.get(name);
            if (stream != null) {
                restore(stream, alerts);
            } else {
                pendingRestore.computeIfAbsent(name, s -> new ArrayList<>()).addAll(alerts);
            }
        });
    }

    /** See {@link MonitorPipeline#resumeCharts}; {@code streams}: the streams open now. */
    void resumeCharts(CusumHistory published, long rereadFromMillis, Collection<StreamState> streams) {
        chartHistory = published;
        chartsRereadFrom = rereadFromMillis;
        for (StreamState stream : streams) {
            stream.resumeCharts(published.of(stream.name()), rereadFromMillis);
        }
    }

    /**
     * Restores one stream's alerts and tells the listener the latest message of every open episode
     * among them (only for streams this pipeline holds: the alerts topic holds other partitions' too).
     */
    private void restore(StreamState stream, List<Alert> alerts) {
        stream.restore(alerts);
        Map<List<String>, Alert> latestByEpisode = new LinkedHashMap<>();
        for (Alert alert : alerts) {
            latestByEpisode.put(List.of(alert.rule(), alert.subject().term(), String.valueOf(alert.subject().level())),
                    alert);
        }
        for (Alert latest : latestByEpisode.values()) {
            if (latest.state() != AlertState.CLEARED) {
                listener.onAlertRestored(latest);
            }
        }
    }
}
