package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.function.LongConsumer;
import java.util.stream.Collectors;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.engine.RuleInputs;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.output.CsvEstimatesSink;
import org.oddswatch.alerts.output.JsonLinesSink;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.report.ReplayReport;
import org.oddswatch.alerts.report.html.HtmlReport;
import org.oddswatch.alerts.report.html.RejectMark;
import org.oddswatch.alerts.report.html.ReportOptions;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.RecordOutcome;

/**
 * Replays an event file through the same {@link MonitorPipeline} and output stage as the live
 * service, time driven by the events, into the replay folder's files (ingest/README.md, "Replay");
 * at the end of the file every window that has received events is closed. The same definition and
 * file give byte-identical output. A range ({@code --from/--to}) reports only windows with
 * {@code windowStart >= from} and {@code windowEnd <= to}, exactly as the full replay writes them;
 * rejects and counts cover the whole file.
 */
public final class ReplayRunner {

    public static final String ESTIMATES = "estimates.jsonl";
    public static final String ESTIMATES_CSV = "estimates.csv";
    public static final String REJECTS = "rejects.jsonl";
    public static final String ALERTS = "alerts.jsonl";
    /** The incident messages of the whole file (alert episodes grouped; not limited to a range). */
    public static final String INCIDENTS = "incidents.jsonl";
    public static final String SUMMARY = "summary.json";
    /** The alert engines' calls ({@link RuleInputs}), for re-running the rules with other limits ({@link RuleRerun}). */
    public static final String RULE_INPUTS = "rules-input.jsonl";

    private ReplayRunner() {
    }

    /**
     * @throws DefinitionException for an invalid definition
     * @throws IllegalArgumentException when a frozen baseline file cannot be used
     * @throws IOException when the input cannot be read or the output written
     */
    public static ReplaySummary run(ReplayRequest request) throws DefinitionException, IOException {
        return run(DefinitionLoader.load(request.config()), request);
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
        InputFormat format = request.format() != null ? request.format() : InputFormat.of(request.input());
        Path out = request.out();
        OutputSink files = OutputSink.all(JsonLinesSink.replayFiles(out.resolve(ESTIMATES), out.resolve(ALERTS),
                out.resolve(REJECTS), out.resolve(INCIDENTS)), new CsvEstimatesSink(out.resolve(ESTIMATES_CSV)));
        ReportOutputs outputs = new ReportOutputs(request, monitors, files);
        MonitorPipeline pipeline;
        Files.deleteIfExists(out.resolve(RULE_INPUTS)); // never one left from an earlier replay
        try (files; Writer ruleInputs = request.keepRuleInputs()
                ? Files.newBufferedWriter(out.resolve(RULE_INPUTS), StandardCharsets.UTF_8) : null) {
            pipeline = new MonitorPipeline(request.input().toString(), monitors,
                    new OutputStage(monitors, monitor -> List.of(outputs)),
                    ruleInputs == null ? settings : settings.withRuleInputs(new RuleInputs(ruleInputs)));
            EventFileReader.read(request.input(), format, new PipelineFeed(pipeline), bytesRead);
            pipeline.closeAll();
        } catch (UncheckedIOException e) {
            throw e.getCause();
        }
        ReplaySummary summary = summary(request, format, pipeline.snapshot(), outputs);
        Files.writeString(request.out().resolve(SUMMARY),
                Json.mapper().writerWithDefaultPrettyPrinter().writeValueAsString(summary) + "\n",
                StandardCharsets.UTF_8);
        // the reports' small-cell rule: the highest limit among the replayed monitors
        SmallCellPolicy cells = new SmallCellPolicy(monitors.stream().mapToInt(m -> m.outputs().withholdCountsBelow())
                .reduce(SmallCellPolicy.DEFAULT_LIMIT, Math::max));
        String title = "Replay of " + request.input().getFileName() + " ("
                + monitors.stream().map(MonitorDefinition::name).collect(Collectors.joining(", ")) + ")";
        ReplayReport.write(request.out(), outputs.estimates, outputs.alerts, summary.gaps(), title, cells);
        HtmlReport.write(request.out(), outputs.estimates, outputs.alerts, title, ReportOptions.withholding(cells)
                .withRejects(outputs.rejectMarks).withRules(stream -> monitors.stream().filter(m -> m.owns(stream))
                        .findFirst().map(MonitorDefinition::rules).orElse(null)));
        return summary;
    }

    /** True for a window starting at or after {@code from} and ending at or before {@code to} (null: open). */
    static boolean inRange(Instant from, Instant to, Instant windowStart, Instant windowEnd) {
        return (from == null || !windowStart.isBefore(from)) && (to == null || !windowEnd.isAfter(to));
    }

    private static ReplaySummary summary(ReplayRequest request, InputFormat format, PipelineSnapshot snapshot,
                                         ReportOutputs outputs) {
        List<ReplaySummary.Monitor> monitors = snapshot.monitors().stream()
                .map(m -> new ReplaySummary.Monitor(m.monitor(), m.streams(), m.unrouted())).toList();
        List<ReplaySummary.Stream> streams = snapshot.streams().stream().map(stream -> {
            WindowEstimate[] span = outputs.windowSpan.get(stream.stream());
            return new ReplaySummary.Stream(stream.stream(), stream.finalWindows(),
                    span == null ? null : span[0].windowEnd(), span == null ? null : span[1].windowEnd(),
                    stream.baseline(), stream.baselineNote(), stream.counts(), stream.gaps());
        }).toList();
        return new ReplaySummary(request.input().toString(), format.name().toLowerCase(Locale.ROOT),
                request.from(), request.to(), snapshot.totals(), outputs.estimates.size(), outputs.rejects,
                outputs.alerts.size(), monitors, streams);
    }

    /**
     * Feeds file records to the pipeline with their line numbers (also used by the baseline builder
     * and the checker, which overrides {@link #offered} to see each readable record's outcome).
     */
    public static class PipelineFeed implements RecordSink {
        private final MonitorPipeline pipeline;

        public PipelineFeed(MonitorPipeline pipeline) {
            this.pipeline = pipeline;
        }

        /** The outcome of the readable record on {@code line}; nothing by default. */
        protected void offered(RecordOutcome outcome, long line) {
        }

        @Override
        public final void json(byte[] value, long line) {
            offered(pipeline.offer(value, RecordOrigin.line(line), false), line);
        }

        @Override
        public final void tree(ObjectNode row, byte[] original, long line) {
            offered(pipeline.offerTree(row, original, RecordOrigin.line(line), false), line);
        }

        @Override
        public final void unreadable(byte[] original, long line, String reason, String detail) {
            pipeline.offerUnreadable(original, RecordOrigin.line(line), reason, detail, false);
        }
    }

    /**
     * Passes the range's estimates and alerts (and every reject) on to the files, and keeps the
     * range's estimates and alerts, and a mark per reject, for the reports.
     */
    private static final class ReportOutputs implements OutputSink {
        private final Instant from;
        private final Instant to;
        private final Map<String, MonitorDefinition> monitors;
        private final OutputSink files;
        final List<WindowEstimate> estimates = new ArrayList<>();
        final List<Alert> alerts = new ArrayList<>();
        /** Per stream, its first and last estimate in the range. */
        final Map<String, WindowEstimate[]> windowSpan = new LinkedHashMap<>();
        final List<RejectMark> rejectMarks = new ArrayList<>();
        long rejects;

        ReportOutputs(ReplayRequest request, List<MonitorDefinition> monitors, OutputSink files) {
            this.from = request.from();
            this.to = request.to();
            this.monitors = monitors.stream().collect(Collectors.toMap(MonitorDefinition::name, m -> m, (a, b) -> b));
            this.files = files;
        }

        @Override
        public void estimate(WindowEstimate estimate, Published published) {
            if (inRange(from, to, estimate.windowStart(), estimate.windowEnd())) {
                estimates.add(estimate);
                windowSpan.computeIfAbsent(estimate.stream(), s -> new WindowEstimate[] {estimate, estimate})[1] = estimate;
                files.estimate(estimate, published);
            }
        }

        @Override
        public void alert(Alert alert, Published published) {
            if (inRange(from, to, alert.windowStart(), alert.windowEnd())) {
                alerts.add(alert);
                files.alert(alert, published);
            }
        }

        @Override
        public void incident(Incident incident, Published published) {
            files.incident(incident, published);
        }

        @Override
        public void reject(Published reject, String messageJson) {
            rejects++;
            JsonNode node = tree(reject.json());
            if (node != null && node.isObject()) {
                rejectMarks.add(mark(node));
            }
            files.reject(reject, messageJson);
        }

        /**
         * A reject as the HTML report counts it: its stream (for a record rejected while decoded, the
         * stream its split value names), reason (else outcome), and event time read by its monitor;
         * null where unreadable.
         */
        private RejectMark mark(JsonNode reject) {
            String reason = reject.hasNonNull("reason") ? reject.get("reason").asText()
                    : reject.path("outcome").asText("unknown");
            String stream = reject.hasNonNull("stream") ? reject.get("stream").asText() : null;
            MonitorDefinition monitor = monitors.get(reject.path("monitor").asText(""));
            JsonNode record = monitor == null || !reject.hasNonNull("value") ? null
                    : tree(reject.get("value").asText());
            if (record == null || !record.isObject()) {
                return new RejectMark(stream, reason, null);
            }
            if (stream == null) {
                JsonNode split = monitor.split() == null ? null : record.at(monitor.split().field());
                stream = split == null ? monitor.streamName(null)
                        : split.isValueNode() && !split.isNull() ? monitor.streamName(split.asText()) : null;
            }
            try {
                return new RejectMark(stream, reason, Instant.ofEpochMilli(EventDecoder.parseTime(
                        record.at(monitor.event().time()))));
            } catch (RuntimeException e) {
                return new RejectMark(stream, reason, null);
            }
        }

        private static JsonNode tree(String text) {
            try {
                return Json.mapper().readTree(text);
            } catch (IOException e) {
                return null;
            }
        }
    }
}
