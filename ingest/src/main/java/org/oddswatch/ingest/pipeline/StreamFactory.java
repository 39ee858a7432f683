package org.oddswatch.ingest.pipeline;

import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * Makes the routes and streams of one pipeline: window stores, baselines (a fixed period, or a
 * frozen file: one per monitor, or one per split value read when its stream opens), and what a
 * restart restored for streams not seen yet (open alert episodes, CUSUM values).
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

    /**
     * The route of {@code monitor}, with its baseline file read now when every stream shares it (a
     * file name without {@code {split}}).
     *
     * @throws IllegalArgumentException when that file cannot be read
     */
    MonitorRoute route(MonitorDefinition monitor) {
        BaselineSpec spec = monitor.baseline();
        if (spec == null || spec.isFixedPeriod() || spec.file().contains("{split}")) {
            return new MonitorRoute(monitor, null);
        }
        Path file = spec.fileFor(monitor.definitionDir(), null);
        try {
            return new MonitorRoute(monitor, readBaseline(file, monitor));
        } catch (IOException | RuntimeException e) {
            throw new IllegalArgumentException("monitor " + monitor.name() + ": cannot read baseline file " + file
                    + ": " + e.getMessage(), e);
        }
    }

    /**
     * A new stream of {@code route}. A baseline file of its own that cannot be read leaves the stream
     * without a baseline, with the reason as its note (shown as a monitoring gap).
     */
    StreamState open(MonitorRoute route, String name, String splitValue) {
        MonitorDefinition monitor = route.monitor;
        int strata = monitor.strata();
        int patternLimit = monitor.estimates().patternLimit();
        WindowStore store = new WindowStore(route.decoder.coder(), patternLimit, strata);
        BaselineSpec spec = monitor.baseline();
        WindowStore baselineStore = null;
        BaselineModel fileBaseline = route.sharedBaseline;
        String note = null;
        if (spec != null && spec.isFixedPeriod()) {
            baselineStore = new WindowStore(route.decoder.coder(), patternLimit, strata);
        } else if (spec != null && fileBaseline == null) {
            Path file = spec.fileFor(monitor.definitionDir(), splitValue);
            try {
                fileBaseline = readBaseline(file, monitor);
            } catch (IOException | RuntimeException e) {
                note = "cannot read baseline file " + file + ": " + e.getMessage();
            }
        }
        StreamState stream = new StreamState(name, monitor, route.estimator, store, baselineStore, fileBaseline, note,
                listener, settings.replayHint(), heldOutcomes);
        List<Alert> restore = pendingRestore.remove(name);
        if (restore != null) {
            stream.restore(restore);
            reportOpen(restore);
        }
        if (chartHistory != null) {
            stream.resumeCharts(chartHistory.of(name), chartsRereadFrom);
        }
        return stream;
    }

    /** A frozen baseline file ({@link BaselineFile}), checked against the monitor's design columns and checksum. */
    private static BaselineModel readBaseline(Path file, MonitorDefinition monitor) throws IOException {
        BaselineModel model = BaselineFile.read(file, monitor.designCoder().columns());
        if (!BaselineFile.checksumMatches(model, monitor.checksum())) {
            throw new IOException("it was fitted under another definition of the outcome or terms (checksum "
                    + model.definitionChecksum() + ", this definition " + monitor.checksum() + ")");
        }
        return model;
    }

    /** See {@link MonitorPipeline#restoreAlerts}; {@code streams}: the streams open now, by name. */
    void restoreAlerts(List<Alert> published, Map<String, StreamState> streams) {
        Map<String, List<Alert>> byStream = new LinkedHashMap<>();
        for (Alert alert : published) {
            byStream.computeIfAbsent(alert.stream(), s -> new ArrayList<>()).add(alert);
        }
        for (Map.Entry<String, List<Alert>> entry : byStream.entrySet()) {
            StreamState stream = streams.get(entry.getKey());
            if (stream != null) {
                stream.restore(entry.getValue());
                reportOpen(entry.getValue());
            } else {
                pendingRestore.computeIfAbsent(entry.getKey(), s -> new ArrayList<>()).addAll(entry.getValue());
            }
        }
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
     * Tells the listener the latest message of every open episode among one stream's restored alerts;
     * called only for streams this pipeline holds (the alerts topic holds other partitions' too).
     */
    private void reportOpen(List<Alert> streamAlerts) {
        Map<List<String>, Alert> latestByEpisode = new LinkedHashMap<>();
        for (Alert alert : streamAlerts) {
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
