package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.report.html.ComparisonReport;
import org.oddswatch.deploy.audit.AuditSummary;
import org.oddswatch.deploy.tune.ComparisonData;
import org.oddswatch.deploy.tune.LimitGrid;
import org.oddswatch.deploy.tune.SettingResult;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.oddswatch.ingest.replay.RuleRerun;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch tune}: a replay's alerts under other rule limits, from its recorded rule inputs. */
@Command(name = "tune", mixinStandardHelpOptions = true,
        description = {"Re-run only the alert rules of a replay with other limits, from its rules-input.jsonl: "
            + "no event is decoded and no model is fitted. Each setting (a definition given with --rules-from, or "
            + "each combination of the --try values applied to --config) gives exactly the alerts a replay of the "
            + "same input with that definition gives. Writes OUT/setting-N/alerts.jsonl per setting and "
            + "OUT/settings.jsonl (one line per setting: messages, episodes, first episode raised after --after) and "
            + "OUT/comparison.html, a page comparing the settings with the replay's alerts."})
final class TuneCommand implements Callable<Integer> {

    static final String SETTINGS = "settings.jsonl";

    @Option(names = "--replay", required = true, paramLabel = "DIR", description = "A replay folder (oddswatch replay --out DIR).")
    Path replay;

    @Option(names = "--config", paramLabel = "FILE", description = "The definition the --try values are applied to (normally the replay's).")
    Path config;

    @Option(names = "--rules-from", paramLabel = "FILE", description = "A definition whose rules to run (repeatable); only its rules sections may differ from the replay's.")
    List<Path> definitions = new ArrayList<>();

    @Option(names = "--try", paramLabel = "RULE.KEY=V1[,V2...]", description = "Values of one rules key for every monitor, e.g. oddsRatioDrift.limit=2.5,3,3.5 (repeatable: every combination is a setting).")
    List<String> tries = new ArrayList<>();

    @Option(names = "--after", paramLabel = "TIME", converter = InstantConverter.class, description = "Report the first episode raised in a window ending at or after this time (RFC 3339 or a date).")
    Instant after;

    @Option(names = "--out", required = true, paramLabel = "DIR", description = "Where settings.jsonl and setting-N/alerts.jsonl go.")
    Path out;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        if (definitions.isEmpty() && tries.isEmpty()) {
            throw UserError.config("give at least one setting: --rules-from FILE or --try RULE.KEY=VALUES");
        }
        if (!Files.isRegularFile(replay.resolve(ReplayRunner.RULE_INPUTS))) {
            throw UserError.config("--replay: " + replay + " holds no " + ReplayRunner.RULE_INPUTS
                    + "; make the replay with `oddswatch replay --for-tuning ...` first");
        }
        List<Map<String, String>> grid;
        try {
            grid = new LimitGrid(tries).settings();
        } catch (IllegalArgumentException e) {
            throw UserError.config(e.getMessage());
        }
        if (!grid.isEmpty() && config == null) {
            throw UserError.config("--try needs --config, the definition to apply the values to");
        }
        Files.createDirectories(out);
        PrintWriter w = spec.commandLine().getOut();
        List<SettingResult> results = new ArrayList<>();
        for (Path definition : definitions) {
            results.add(run(results.size() + 1, DefinitionFile.load(definition), definition.toString(), Map.of()));
        }
        String base = grid.isEmpty() ? null : Files.readString(DefinitionFile.requireFile(config, "--config"));
        for (Map<String, String> setting : grid) {
            String name = "setting-" + (results.size() + 1);
            Path file = out.resolve(name).resolve("definition.yaml");
            Files.createDirectories(file.getParent());
            Files.writeString(file, LimitGrid.apply(base, setting), StandardCharsets.UTF_8);
            MonitorConfig loaded;
            try {
                loaded = DefinitionLoader.parse(file.toString(), Files.readString(file), System.getenv(),
                        config.toAbsolutePath().getParent());
            } catch (DefinitionException e) {
                throw UserError.config(e.getMessage(), e);
            }
            results.add(run(results.size() + 1, loaded, file.toString(), setting));
        }
        try (Writer summary = Files.newBufferedWriter(out.resolve(SETTINGS), StandardCharsets.UTF_8)) {
            for (SettingResult r : results) {
                summary.write(Json.write(r) + "\n");
                w.println(line(r));
            }
        }
        w.println("wrote " + out.resolve(SETTINGS));
        List<Path> settingAlerts = results.stream().map(r -> out.resolve(r.name()).resolve(ReplayRunner.ALERTS)).toList();
        Path page = ComparisonReport.write(out, ComparisonData.build(replay.resolve(ReplayRunner.ALERTS), results,
                settingAlerts, after), "oddswatch tune: " + results.size() + " settings on " + replay.getFileName());
        w.println("comparison page: " + page);
        w.println(AuditSummary.CAUTION);
        w.flush();
        return 0;
    }

    private SettingResult run(int n, MonitorConfig definition, String path, Map<String, String> changes)
            throws IOException {
        String name = "setting-" + n;
        long start = System.nanoTime();
        List<RuleRerun.Line> lines;
        try {
            lines = RuleRerun.alerts(replay, definition, path);
        } catch (IllegalArgumentException e) {
            throw UserError.config(path + ": " + e.getMessage(), e);
        }
        long millis = (System.nanoTime() - start) / 1_000_000;
        Path dir = Files.createDirectories(out.resolve(name));
        try (Writer alerts = Files.newBufferedWriter(dir.resolve(ReplayRunner.ALERTS), StandardCharsets.UTF_8)) {
            for (RuleRerun.Line line : lines) {
                alerts.write(line.json());
                alerts.write('\n');
            }
        }
        return SettingResult.of(name, path, changes, lines, after, millis);
    }

    private static String line(SettingResult r) {
        StringBuilder b = new StringBuilder(r.name()).append(": ")
                .append(r.changes().isEmpty() ? r.definition() : r.changes().toString())
                .append(": ").append(r.messages()).append(" alert messages, ").append(r.episodes()).append(" episodes");
        SettingResult.First f = r.firstRaised();
        b.append(", first raised").append(r.after() == null ? "" : " after " + r.after()).append(": ");
        if (f == null) {
            b.append("none");
        } else {
            b.append(f.stream()).append(' ').append(f.rule()).append(f.term() == null ? "" : " " + f.term())
                    .append(f.level() == null ? "" : "=" + f.level()).append(" in the window ending ").append(f.windowEnd());
        }
        return b.append(" (").append(r.millis()).append(" ms)").toString();
    }
}
