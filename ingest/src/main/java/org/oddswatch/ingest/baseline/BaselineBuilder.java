package org.oddswatch.ingest.baseline;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.LongConsumer;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.window.WindowData;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.replay.EventFileReader;
import org.oddswatch.ingest.replay.InputFormat;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * Fits and freezes baseline models from an event file. The file runs through the same
 * {@link MonitorPipeline} as a replay, so exactly the events of {@code [from, to)} that a replay's
 * streams accept (the same as a replay's fixed-period baseline) go into one window per stream, or
 * per monitor when pooled, fitted by {@link WindowEstimator#fitBaseline}. A model fitted from too
 * little information ({@link BaselineInformation}) is refused unless the request allows weak models;
 * then it is written and flagged. Files are named {@code <monitor>.json} (no split, or pooled) or
 * {@code <monitor>-<split value>.json} ({@code /} becomes {@code -}), matching a definition's
 * {@code baseline.file: baselines/<monitor>-{split}.json}.
 */
public final class BaselineBuilder {

    private BaselineBuilder() {
    }

    /**
     * What to fit a baseline on.
     *
     * @param events the event file (JSON Lines or CSV)
     * @param format its format, or null to tell by the file name
     * @param from start of the baseline period (inclusive event time)
     * @param to end of the period (exclusive)
     * @param outDir where the baseline files are written
     * @param monitor only this monitor, or null for every monitor
     * @param pooled one baseline per monitor over all its split values, instead of one per stream
     * @param allowWeak write a model fitted from too little information too (flagged), instead of refusing it
     */
    public record BaselineRequest(Path events, InputFormat format, Instant from, Instant to, Path outDir,
                                  String monitor, boolean pooled, boolean allowWeak) {

        public BaselineRequest {
            if (from == null || to == null || !from.isBefore(to)) {
                throw new IllegalArgumentException("the baseline period needs --from before --to");
            }
        }
    }

    /**
     * One baseline the builder produced, or could not.
     *
     * @param stream the stream, or the monitor name for a pooled or unsplit baseline
     * @param file the file written, or null when none was written
     * @param events accepted events of the period (complete or not)
     * @param positives positives among them
     * @param model the fitted model, or null when the fit failed
     * @param problem why no file was written (no positives, no convergence, too little information), or null
     * @param weakness why the model rests on too little information ({@link BaselineInformation}), or null;
     *     a weak model is written only when the request allows it
     */
    public record BuiltBaseline(String monitor, String stream, Path file, long events, long positives,
                                BaselineModel model, String problem, String weakness) {

        /** Whether a file was written. */
        public boolean ok() {
            return problem == null;
        }

        /** {@code frozen}, {@code frozen-weak} (written although weak), {@code refused-weak} or {@code failed}. */
        public String state() {
            if (ok()) {
                return weakness == null ? "frozen" : "frozen-weak";
            }
            return model != null && weakness != null ? "refused-weak" : "failed";
        }
    }

    /** One monitor's period stores, by stream (or one pooled, under the monitor's name). */
    private record Accumulator(MonitorDefinition monitor, DesignCoder coder, Map<String, WindowStore> stores) {
        void add(String stream, DecodedEvent event) {
            stores.computeIfAbsent(stream, s -> new WindowStore(coder, monitor.estimates().patternLimit(),
                    monitor.strata())).add(0, event.row(), event.positive(), event.stratum());
        }
    }

    /**
     * Builds the baselines {@code request} asks for, telling {@code bytesRead} each chunk read (progress).
     *
     * @throws IllegalArgumentException when the named monitor does not exist
     * @throws IOException when the events cannot be read or a file cannot be written
     */
    public static List<BuiltBaseline> build(MonitorConfig config, BaselineRequest request, LongConsumer bytesRead)
            throws IOException {
        // without their baseline sections: the files may not exist yet, and no rule is wanted
        List<MonitorDefinition> monitors = config.monitors().stream()
                .filter(m -> request.monitor() == null || request.monitor().equals(m.name()))
                .map(MonitorDefinition::withoutBaseline).toList();
        Map<String, Accumulator> accumulators = new LinkedHashMap<>();
        monitors.forEach(m -> accumulators.put(m.name(), new Accumulator(m, m.designCoder(), new LinkedHashMap<>())));
        if (accumulators.isEmpty()) {
            throw new IllegalArgumentException("no monitor named '" + request.monitor() + "' in " + config.file());
        }
        if (!Files.isRegularFile(request.events())) {
            throw new IOException("events file " + request.events() + " does not exist");
        }
        long from = request.from().toEpochMilli();
        long to = request.to().toEpochMilli();
        PipelineListener collector = new PipelineListener() {
            @Override
            public void onAccepted(String monitor, String stream, DecodedEvent event) {
                if (event.timeMillis() >= from && event.timeMillis() < to) {
                    accumulators.get(monitor).add(request.pooled() ? monitor : stream, event);
                }
            }
        };
        MonitorPipeline pipeline = new MonitorPipeline(request.events().toString(), monitors, collector,
                PipelineSettings.defaults().withLimits(config.limits()));
        EventFileReader.read(request.events(), request.format(), new ReplayRunner.PipelineFeed(pipeline), bytesRead);
        Files.createDirectories(request.outDir());
        List<BuiltBaseline> built = new ArrayList<>();
        for (Accumulator accumulator : accumulators.values()) {
            fit(accumulator, request, built);
        }
        return built;
    }

    private static void fit(Accumulator accumulator, BaselineRequest request, List<BuiltBaseline> built) {
        MonitorDefinition monitor = accumulator.monitor;
        WindowEstimator estimator = new WindowEstimator(accumulator.coder, monitor.estimatorOptions());
        if (accumulator.stores.isEmpty()) {
            built.add(new BuiltBaseline(monitor.name(), monitor.name(), null, 0, 0, null,
                    "no accepted events between " + request.from() + " and " + request.to(), null));
        }
        for (Map.Entry<String, WindowStore> entry : accumulator.stores.entrySet()) {
            String stream = entry.getKey();
            WindowData period = entry.getValue().window(0, 1);
            BaselineModel model;
            try {
                model = estimator.fitBaseline(period, request.from().toString(), request.to().toString(),
                        monitor.checksum());
            } catch (IllegalArgumentException e) {
                built.add(new BuiltBaseline(monitor.name(), stream, null, period.events(), period.cases(), null,
                        e.getMessage(), null));
                continue;
            }
            String weakness = BaselineInformation.weakness(model);
            Path file = weakness != null && !request.allowWeak() ? null
                    : request.outDir().resolve(BaselineSpec.fileSafe(stream) + ".json");
            if (file != null) {
                BaselineFile.write(file, model);
            }
            built.add(new BuiltBaseline(monitor.name(), stream, file, period.events(), period.cases(), model,
                    file == null ? "refused: " + weakness : null, weakness));
        }
    }
}
