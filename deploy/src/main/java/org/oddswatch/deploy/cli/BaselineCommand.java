package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.time.Instant;
import java.util.List;
import java.util.concurrent.Callable;
import org.oddswatch.ingest.baseline.BaselineBuilder;
import org.oddswatch.ingest.baseline.BaselineBuilder.BaselineRequest;
import org.oddswatch.ingest.baseline.BaselineBuilder.BuiltBaseline;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.InputFormat;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch baseline}: fit and freeze baseline models from a period of events. */
@Command(name = "baseline", mixinStandardHelpOptions = true,
        description = {
            "Fit and freeze baseline models from the events of a period.",
            "Writes one file per stream into --out: <monitor>.json, or <monitor>-<split value>.json for a split "
            + "monitor (one file per monitor with --pooled). Point a definition at them with "
            + "baseline: {file: DIR/<monitor>-{split}.json}. Each file records the coefficients, covariance, term "
            + "coding, period, event counts and a checksum of the definition's model.",
            "Events are counted as a replay counts them (the future and late rules, the stream cap, dedupe). A model "
            + "with fewer than 10 events of the rarer outcome per coefficient is refused unless --allow-weak. Prints "
            + "per stream the events, positives, odds ratios and the state of what it froze."})
final class BaselineCommand implements Callable<Integer> {

    @Mixin
    DefinitionFile config;

    @ArgGroup(exclusive = true, multiplicity = "1")
    InputArgs input;

    @Option(names = "--from", required = true, paramLabel = "TIME", description = "Start of the baseline period (inclusive event time).")
    Instant from;

    @Option(names = "--to", required = true, paramLabel = "TIME", description = "End of the baseline period (exclusive).")
    Instant to;

    @Option(names = "--out", required = true, paramLabel = "DIR", description = "Folder for the baseline files (created).")
    Path out;

    @Option(names = "--monitor", paramLabel = "NAME", description = "Only this monitor (default: every monitor).")
    String monitor;

    @Option(names = "--pooled", description = "One baseline per monitor over all split values.")
    boolean pooled;

    @Mixin
    FormatOption format;

    @Option(names = "--allow-weak", description = "Also write a model fitted from too little information (fewer than "
            + "10 events of the rarer outcome per coefficient); it is flagged weak wherever it is used.")
    boolean allowWeak;

    @Mixin
    ProgressOption progress;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        if (!from.isBefore(to)) {
            throw UserError.config("--from must lie before --to");
        }
        MonitorConfig definition = config.load(spec.commandLine().getErr());
        if (monitor != null && definition.monitor(monitor) == null) {
            throw UserError.config("no monitor named '" + monitor + "' in " + config.path);
        }
        InputFormat inputFormat = format.format();
        List<BuiltBaseline> built;
        if (input.file != null) {
            DefinitionFile.requireFile(input.file, "--input");
            built = build(definition, new BaselineRequest(input.file, inputFormat, from, to, out, monitor, pooled,
                    allowWeak), "baseline");
        } else {
            try (TopicSnapshot snapshot = TopicSnapshot.read(definition.kafka(), input.topic, null)) {
                built = build(definition, new BaselineRequest(snapshot.file(), InputFormat.JSONL, from, to, out,
                        monitor, pooled, allowWeak), "baseline " + input.topic);
            }
        }
        PrintWriter w = spec.commandLine().getOut();
        int failed = 0;
        for (BuiltBaseline b : built) {
            w.print(BaselineSummary.describe(b, from, to));
            failed += b.ok() ? 0 : 1;
        }
        w.flush();
        if (failed > 0) {
            throw UserError.runtime(failed + " of " + built.size()
                    + " baseline(s) not written (failed, or refused as weak: see --allow-weak)", null);
        }
        return 0;
    }

    private List<BuiltBaseline> build(MonitorConfig definition, BaselineRequest request, String task)
            throws IOException {
        try (ProgressMeter meter = progress.start(ProgressMeter.fileBytes(task, request.events()))) {
            return BaselineBuilder.build(definition, request, meter);
        }
    }
}
