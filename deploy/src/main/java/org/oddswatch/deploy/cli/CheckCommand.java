package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import org.oddswatch.ingest.check.CheckReport;
import org.oddswatch.ingest.check.DefinitionChecker;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.TermSpec;
import org.oddswatch.ingest.replay.InputFormat;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch check}: validates a monitor definition, optionally against sample events. */
@Command(name = "check", mixinStandardHelpOptions = true,
        description = {"Validate a monitor definition.",
            "Lists each monitor's rules, on or off with the reason.",
            "With --events, also count how many sample events each monitor would accept, reject (by reason), "
            + "or find late or duplicate, and list what they would leave unmonitored (a failed or weak baseline, "
            + "a rule that does not run, windows a rule could not judge, a term missing from every event). "
            + "Exit status 2 when the definition is invalid."})
final class CheckCommand implements Callable<Integer> {

    @Mixin
    DefinitionFile config;

    @Option(names = "--events", paramLabel = "FILE", description = "Sample events, JSON Lines or CSV.")
    Path events;

    @Spec
    CommandSpec spec;

    @Mixin
    FormatOption format;

    @Override
    public Integer call() throws Exception {
        MonitorConfig definition = DefinitionFile.load(config.path);
        PrintWriter out = spec.commandLine().getOut();
        if (events == null) {
            out.print(describe(definition));
        } else {
            DefinitionFile.requireFile(events, "--events");
            InputFormat inputFormat = format.format();
            CheckReport report = DefinitionChecker.check(definition, events, inputFormat);
            out.print(describe(definition));
            String text = report.describe();
            // the report's own first lines repeat the definition facts: keep the event part
            int at = text.indexOf(events.toString() + ": ");
            out.print(at >= 0 ? text.substring(at) : text);
        }
        out.flush();
        return 0;
    }

    private String describe(MonitorConfig definition) {
        StringBuilder b = new StringBuilder();
        b.append(config.path).append(": valid, ").append(definition.monitors().size()).append(" monitor(s)\n");
        for (int i = 0; i < definition.monitors().size(); i++) {
            MonitorDefinition m = definition.monitors().get(i);
            StringBuilder watched = new StringBuilder();
            for (TermSpec t : m.terms()) {
                if (t.term().watched()) {
                    watched.append(watched.length() == 0 ? "" : ", ").append(t.name());
                }
            }
            b.append("  ").append(m.name()).append(": topic ").append(m.topic()).append(", ").append(m.terms().size())
                    .append(" terms (watched: ").append(watched.length() == 0 ? "none" : watched).append("), window ")
                    .append(Texts.duration(m.window().width())).append(" every ").append(Texts.duration(m.window().step()))
                    .append(", lateness ").append(Texts.duration(m.window().lateness()))
                    .append(m.split() == null ? "" : ", split by " + m.split().field())
                    .append(m.baseline() == null ? ", no baseline" : m.baseline().isFixedPeriod()
                            ? ", baseline " + m.baseline().from() + " to " + m.baseline().to()
                            : ", baseline file " + m.baseline().file())
                    .append('\n');
            CheckReport.appendRules(b, m);
        }
        return b.toString();
    }
}
