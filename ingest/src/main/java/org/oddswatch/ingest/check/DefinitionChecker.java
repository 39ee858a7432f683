package org.oddswatch.ingest.check;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.OutcomeCounts;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.oddswatch.ingest.replay.EventFileReader;
import org.oddswatch.ingest.replay.InputFormat;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * Runs sample events through the same pipeline as replay (windows closed at the end, rules run,
 * estimates and alerts discarded): how many each monitor would accept or reject, by reason, and what
 * would not be monitored ({@link MonitoringGap}). The definition itself is validated by loading it.
 */
public final class DefinitionChecker {

    private DefinitionChecker() {
    }

    /** Checks sample events against a loaded definition; {@code format} null tells it by the file name. */
    public static CheckReport check(MonitorConfig config, Path events, InputFormat format) throws IOException {
        if (!Files.isRegularFile(events)) {
            throw new IOException("events file " + events + " does not exist");
        }
        Map<String, CheckReport.Example> examples = new TreeMap<>();
        PipelineListener listener = new PipelineListener() {
            @Override
            public void onReject(RejectedRecord record) {
                examples.putIfAbsent(record.reason(),
                        new CheckReport.Example(record.origin().lineNumber(), record.monitor(), record.detail()));
            }
        };
        MonitorPipeline pipeline = new MonitorPipeline(events.toString(), config.monitors(), listener,
                PipelineSettings.defaults().withLimits(config.limits()));
        EventFileReader.read(events, format, new ReplayRunner.PipelineFeed(pipeline) {
            @Override
            protected void offered(RecordOutcome outcome, long line) {
                if (outcome.reason() != null) { // duplicates are not sent to rejects: their first line is kept too
                    examples.putIfAbsent(outcome.reason(), new CheckReport.Example(line, null, outcome.detail()));
                }
            }
        });
        pipeline.closeAll();
        PipelineSnapshot snapshot = pipeline.snapshot();
        List<MonitoringGap> gaps = snapshot.streams().stream().flatMap(stream -> stream.gaps().stream()).toList();
        List<CheckReport.MonitorCounts> monitors = new ArrayList<>();
        for (PipelineSnapshot.MonitorStatus monitor : snapshot.monitors()) {
            OutcomeCounts.Snapshot counts = monitor.unrouted();
            for (StreamStatus stream : snapshot.streams()) {
                if (stream.monitor().equals(monitor.monitor())) {
                    counts = counts.plus(stream.counts());
                }
            }
            monitors.add(new CheckReport.MonitorCounts(monitor.monitor(), monitor.streams(), counts));
        }
        return new CheckReport(events.toString(), snapshot.totals(), monitors, examples, gaps, pipeline.budgetSplits());
    }
}
