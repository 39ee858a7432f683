package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.time.Instant;
import java.util.List;
import java.util.concurrent.Callable;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.InputFormat;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.oddswatch.ingest.replay.ReplaySummary;
import org.oddswatch.ingest.service.RebuildSpan;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch replay}: a file or a topic through the same pipeline, into a report folder. */
@Command(name = "replay", mixinStandardHelpOptions = true,
        description = {
            "Run past events through the monitor pipeline, time driven by the events, and write a report folder.",
            "Writes estimates.jsonl (final windows), estimates.csv (the same as a table), rejects.jsonl, alerts.jsonl, summary.json, report.md and "
            + "report.html (charts; open it in a browser) into --out. The same definition and events give "
            + "byte-identical files. Every alert message carries the replay command that reproduces it. Prints what "
            + "was not monitored (a failed or weak baseline, a rule that did not run, windows a rule did not judge, a "
            + "term missing from every event) with the reason."})
final class ReplayCommand implements Callable<Integer> {

    @Mixin
    DefinitionFile config;

    @ArgGroup(exclusive = true, multiplicity = "1")
    InputArgs input;

    @Option(names = "--out", required = true, paramLabel = "DIR", description = "Report folder (created; files in it are replaced).")
    Path out;

    @Option(names = "--from", paramLabel = "TIME", description = "Report only windows starting at or after this time (RFC 3339 or a date); earlier events are still read, so baselines, warm starts and CUSUM history match the full run.")
    Instant from;

    @Option(names = "--to", paramLabel = "TIME", description = "Report only windows ending at or before this time.")
    Instant to;

    @Mixin
    FormatOption format;

    @Mixin
    ProgressOption progress;

    @Option(names = "--for-tuning", description = "Also write rules-input.jsonl (every input of the alert rules, a line per event), so that `oddswatch tune` can re-run the rules with other limits without refitting. Off by default: it is large and slows the replay.")
    boolean forTuning;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        if (from != null && to != null && !from.isBefore(to)) {
            throw UserError.config("--from must lie before --to");
        }
        MonitorConfig definition = config.load(spec.commandLine().getErr());
        InputFormat inputFormat = format.format();
        ReplaySummary summary;
        if (input.file != null) {
            DefinitionFile.requireFile(input.file, "--input");
            summary = replay(definition, new ReplayRequest(config.path, input.file, out, inputFormat, from, to, null, forTuning),
                    "replay");
        } else {
            if (definition.monitorsFor(input.topic).isEmpty()) {
                throw UserError.config("no monitor in " + config.path + " reads topic '" + input.topic + "'");
            }
            // read back far enough for the windows around --from and any fixed baseline period
            Instant readFrom = from == null ? null : Instant.ofEpochMilli(RebuildSpan.of(
                    definition.monitorsFor(input.topic), definition.service().rebuildMargin())
                    .startMillis(from.toEpochMilli()));
            try (TopicSnapshot snapshot = TopicSnapshot.read(definition.kafka(), input.topic, readFrom)) {
                summary = replay(definition, new ReplayRequest(config.path, snapshot.file(), out, InputFormat.JSONL, from,
                        to, input.topic, forTuning), "replay " + input.topic);
            }
        }
        PrintWriter w = spec.commandLine().getOut();
        w.println("replayed " + summary.records().consumed() + " records: " + Counts.outcomes(summary.records()));
        w.println("wrote " + summary.finalWindows() + " final window estimate(s), " + summary.rejectsWritten()
                + " reject(s), " + summary.alerts() + " alert message(s) to " + out);
        List<MonitoringGap> gaps = summary.gaps();
        if (!gaps.isEmpty()) {
            w.println("not monitored (" + gaps.size() + "; alerts cannot come from these, see report.md):");
            for (MonitoringGap gap : gaps) {
                w.println("  " + gap.describe());
            }
        }
        w.println("charts: open " + out.resolve("report.html") + " in a browser");
        if (summary.alerts() > 0) {
            w.println("alerts call for investigation; they are not a diagnosis or proof of cause (see "
                    + out.resolve("report.md") + ")");
        }
        w.flush();
        return 0;
    }

    private ReplaySummary replay(MonitorConfig definition, ReplayRequest request, String task) throws IOException {
        try (ProgressMeter meter = progress.start(ProgressMeter.fileBytes(task, request.input()))) {
            return ReplayRunner.run(definition, request, meter);
        } catch (IllegalArgumentException e) {
            // a frozen baseline that does not fit the definition, an unusable topic choice
            throw UserError.config(e.getMessage(), e);
        }
    }
}
