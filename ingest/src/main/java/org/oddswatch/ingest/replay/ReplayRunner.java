package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.LongConsumer;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.output.CsvEstimatesSink;
import org.oddswatch.alerts.output.JsonLinesSink;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.report.ReplayReport;
import org.oddswatch.alerts.report.html.HtmlReport;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.StreamStatus;

/**
 * Replays an event file through the same {@link MonitorPipeline} as the live service, time driven by
 * the events, and writes into the output folder:
 * <ul>
 *   <li>{@code estimates.jsonl}: every final window estimate, one JSON object per line, small cells
 *       withheld as on the estimates topic ({@link PublishedEstimate});</li>
 *   <li>{@code estimates.csv}: the same estimates as a table, a row per coefficient ({@link CsvEstimatesSink});</li>
 *   <li>{@code rejects.jsonl}: rejected and late records with their line number, reason and bytes;</li>
 *   <li>{@code alerts.jsonl}: alert messages in the order raised;</li>
 *   <li>{@code summary.json}: counts by outcome and reason, windows per stream;</li>
 *   <li>{@code report.md}: the readable report of the alerts module;</li>
 *   <li>{@code report.html}: the same replay as charts in one self-contained page ({@link HtmlReport}).</li>
 * </ul>
 * At the end of the file every window that has received events is closed. The same definition and
 * file give byte-identical output.
 *
 * <p>A range ({@code --from/--to}) chooses which windows are reported: estimates and alerts of windows
 * with {@code windowStart >= from} and {@code windowEnd <= to}. The whole file is still fed, because
 * a window's estimate and alerts depend on events outside it: the fixed baseline period, the warm
 * start chained from earlier windows, the CUSUM history since the baseline, alert episodes opened
 * earlier, and later events that make the range's last windows final or its late events late. So a
 * range replay writes exactly the full replay's estimates and alerts of those windows, byte for
 * byte, and an alert's own replay command reproduces it. Rejects and counts cover the whole file.
 */
public final class ReplayRunner {

    public static final String ESTIMATES = "estimates.jsonl";
    public static final String ESTIMATES_CSV = "estimates.csv";
    public static final String REJECTS = "rejects.jsonl";
    public static final String ALERTS = "alerts.jsonl";
    public static final String SUMMARY = "summary.json";

    private ReplayRunner() {
    }

    /**
     * @throws DefinitionException for an invalid definition (a usage/configuration error)
     * @throws IllegalArgumentException when a frozen baseline file cannot be used (configuration)
     * @throws IOException when the input cannot be read or the output written
     */
    public static ReplaySummary run(ReplayRequest request) throws DefinitionException, IOException {
        MonitorConfig config = DefinitionLoader.load(request.config());
        return run(config, request);
    }

    /** Runs with an already loaded definition. */
    public static ReplaySummary run(MonitorConfig config, ReplayRequest request) throws IOException {
        return run(config, request, bytes -> { });
    }

    /** As {@link #run(MonitorConfig, ReplayRequest)}, telling {@code bytesRead} each chunk read (progress). */
    public static ReplaySummary run(MonitorConfig config, ReplayRequest request, LongConsumer bytesRead)
            throws IOException {
        if (!Files.isRegularFile(request.input())) {
            throw new IOException("input file " + request.input() + " does not exist");
        }
        List<MonitorDefinition> monitors = request.topic() == null ? config.monitors()
                : config.monitorsFor(request.topic());
        if (monitors.isEmpty()) {
            throw new IllegalArgumentException("no monitor reads topic '" + request.topic() + "'");
        }
        Files.createDirectories(request.out());
        PipelineSettings settings = PipelineSettings.defaults()
                .withLimits(config.limits())
                .withReplayHint(new ReplayHint(request.config() == null ? config.file() : request.config().toString(),
                        request.input().toString(), null));
        InputFormat format = request.effectiveFormat();
        Path out = request.out();
        OutputSink files = OutputSink.all(JsonLinesSink.replayFiles(out.resolve(ESTIMATES), out.resolve(ALERTS),
                out.resolve(REJECTS)), new CsvEstimatesSink(out.resolve(ESTIMATES_CSV)));
        ReportOutputs outputs = new ReportOutputs(new WindowRange(request.from(), request.to()), files);
        MonitorPipeline pipeline;
        try (files) {
            pipeline = new MonitorPipeline(request.input().toString(), monitors,
                    new OutputStage(monitors, monitor -> List.of(outputs)), settings);
            EventFileReader.read(request.input(), format, new PipelineFeed(pipeline), bytesRead);
            pipeline.closeAll();
        } catch (UncheckedIOException e) {
            throw e.getCause();
        }
        ReplaySummary summary = summary(request, format, pipeline.snapshot(), outputs);
        Files.writeString(request.out().resolve(SUMMARY),
                Json.mapper().writerWithDefaultPrettyPrinter().writeValueAsString(summary) + "\n",
                StandardCharsets.UTF_8);
        SmallCellPolicy cells = strictest(monitors);
        ReplayReport.write(request.out(), outputs.estimates, outputs.alerts, summary.gaps(), title(monitors, request),
                cells);
        HtmlReport.write(request.out(), outputs.estimates, outputs.alerts, title(monitors, request),
                ReplayPageOptions.of(request.out().resolve(REJECTS), monitors, cells));
        return summary;
    }

    /** The report's small-cell rule: the highest limit among the replayed monitors. */
    private static SmallCellPolicy strictest(List<MonitorDefinition> monitors) {
        int limit = SmallCellPolicy.DEFAULT_LIMIT;
        for (MonitorDefinition monitor : monitors) {
            limit = Math.max(limit, monitor.outputs().withholdCountsBelow());
        }
        return new SmallCellPolicy(limit);
    }

    private static String title(List<MonitorDefinition> monitors, ReplayRequest request) {
        StringBuilder names = new StringBuilder();
        for (MonitorDefinition monitor : monitors) {
            names.append(names.length() == 0 ? "" : ", ").append(monitor.name());
        }
        return "Replay of " + request.input().getFileName() + " (" + names + ")";
    }

    private static ReplaySummary summary(ReplayRequest request, InputFormat format, PipelineSnapshot snapshot,
                                         ReportOutputs outputs) {
        List<ReplaySummary.Monitor> monitors = new ArrayList<>();
        for (PipelineSnapshot.MonitorStatus monitor : snapshot.monitors()) {
            monitors.add(new ReplaySummary.Monitor(monitor.monitor(), monitor.streams(), monitor.unrouted()));
        }
        List<ReplaySummary.Stream> streams = new ArrayList<>();
        for (StreamStatus stream : snapshot.streams()) {
            WindowEstimate[] span = outputs.windowSpan.get(stream.stream());
            streams.add(new ReplaySummary.Stream(stream.stream(), stream.finalWindows(),
                    span == null ? null : span[0].windowEnd(), span == null ? null : span[1].windowEnd(),
                    stream.baseline(), stream.baselineNote(), stream.counts(), stream.gaps()));
        }
        return new ReplaySummary(request.input().toString(), format.name().toLowerCase(java.util.Locale.ROOT),
                request.from(), request.to(), snapshot.totals(), outputs.estimates.size(), outputs.rejects,
                outputs.alerts.size(), monitors, streams);
    }

    /** Feeds file records to the pipeline with their line numbers (also used by the baseline builder). */
    public static final class PipelineFeed implements RecordSink {
        private final MonitorPipeline pipeline;

        public PipelineFeed(MonitorPipeline pipeline) {
            this.pipeline = pipeline;
        }

        @Override
        public void json(byte[] value, long line) {
            pipeline.offer(value, RecordOrigin.line(line), false);
        }

        @Override
        public void tree(ObjectNode row, byte[] original, long line) {
            pipeline.offerTree(row, original, RecordOrigin.line(line), false);
        }

        @Override
        public void unreadable(byte[] original, long line, String reason, String detail) {
            pipeline.offerUnreadable(original, RecordOrigin.line(line), reason, detail, false);
        }
    }

    /** The windows a replay reports: start at or after {@code from}, end at or before {@code to} (null: open). */
    private record WindowRange(Instant from, Instant to) {
        boolean contains(Instant windowStart, Instant windowEnd) {
            return (from == null || !windowStart.isBefore(from)) && (to == null || !windowEnd.isAfter(to));
        }
    }

    /**
     * Passes the range's estimates and alerts (and every reject) on to the files, and keeps the
     * range's estimates and alerts for the reports.
     */
    private static final class ReportOutputs implements OutputSink {
        private final WindowRange range;
        private final OutputSink files;
        final List<WindowEstimate> estimates = new ArrayList<>();
        final List<Alert> alerts = new ArrayList<>();
        final Map<String, WindowEstimate[]> windowSpan = new LinkedHashMap<>();
        long rejects;

        ReportOutputs(WindowRange range, OutputSink files) {
            this.range = range;
            this.files = files;
        }

        @Override
        public void estimate(WindowEstimate estimate, Published published) {
            if (range.contains(estimate.windowStart(), estimate.windowEnd())) {
                estimates.add(estimate);
                windowSpan.computeIfAbsent(estimate.stream(), s -> new WindowEstimate[] {estimate, estimate})[1] = estimate;
                files.estimate(estimate, published);
            }
        }

        @Override
        public void alert(Alert alert, Published published) {
            if (range.contains(alert.windowStart(), alert.windowEnd())) {
                alerts.add(alert);
                files.alert(alert, published);
            }
        }

        @Override
        public void reject(Published reject, String messageJson) {
            rejects++;
            files.reject(reject, messageJson);
        }
    }
}
