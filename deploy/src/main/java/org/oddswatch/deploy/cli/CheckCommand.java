package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.TermSpec;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch check}: validates a monitor definition, optionally against sample events. */
@Command(name = "check", mixinStandardHelpOptions = true,
        description = {"Validate a monitor definition.",
            "With --events, also count how many sample events each monitor would accept, reject (by reason), "
            + "or find late or duplicate. Exit status 2 when the definition is invalid."})
final class CheckCommand implements Callable<Integer> {

    @Option(names = "--config", required = true, paramLabel = "FILE", description = "Monitor definition (YAML).")
    Path config;

    @Option(names = "--events", paramLabel = "FILE", description = "Sample events, JSON Lines or CSV.")
    Path events;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        MonitorConfig definition = Definitions.load(config);
        PrintWriter out = spec.commandLine().getOut();
        out.println(config + ": valid, " + definition.monitors().size() + " monitor(s)");
        for (MonitorDefinition m : definition.monitors()) {
            StringBuilder watched = new StringBuilder();
            for (TermSpec t : m.terms()) {
                if (t.term().watched()) {
                    watched.append(watched.length() == 0 ? "" : ", ").append(t.name());
                }
            }
            out.println("  " + m.name() + ": topic " + m.topic() + ", " + m.terms().size() + " terms (watched: "
                    + (watched.length() == 0 ? "none" : watched) + "), window " + Texts.duration(m.window().width())
                    + " every " + Texts.duration(m.window().step()) + ", lateness " + Texts.duration(m.window().lateness())
                    + (m.split() == null ? "" : ", split by " + m.split().field())
                    + (m.baseline() == null ? ", no baseline" : m.baseline().isFixedPeriod()
                        ? ", baseline " + m.baseline().from() + " to " + m.baseline().to()
                        : ", baseline file " + m.baseline().file()));
        }
        if (events != null) {
            Definitions.requireFile(events, "--events");
            throw UserError.runtime("checking sample events is not available in this build yet", null);
        }
        out.flush();
        return 0;
    }
}
