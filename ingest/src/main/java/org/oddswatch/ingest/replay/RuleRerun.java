package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.BufferedReader;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.engine.RuleInputs;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The alerts a replay would have given with other rule settings, from its {@code rules-input.jsonl}
 * alone: no event is decoded and no model fitted. Each stream's engine is made from the monitor of
 * {@code config} that holds the stream (its rules, window grid and small-cell rule), and the alerts
 * are kept within the replay's range, as {@link ReplayRunner} keeps them; so they equal, line for
 * line, the {@code alerts.jsonl} of a replay of the same input with {@code config}.
 */
public final class RuleRerun {

    /** One alert as {@code alerts.jsonl} holds it. */
    public record Line(Alert alert, String json) {
    }

    private RuleRerun() {
    }

    /**
     * @param replay a replay folder written with a rule-input file
     * @param config the definition whose rules to run (its monitors must hold the replay's streams)
     * @param configPath the definition's path as the alerts' replay command names it
     * @throws IOException when the folder has no rule-input file or summary, or one cannot be read
     * @throws IllegalArgumentException when no monitor of {@code config} holds a replayed stream, or
     *     its model checksum or window grid is not the replay's
     */
    public static List<Line> alerts(Path replay, MonitorConfig config, String configPath) throws IOException {
        Path calls = replay.resolve(ReplayRunner.RULE_INPUTS);
        Path summaryFile = replay.resolve(ReplayRunner.SUMMARY);
        if (!Files.isRegularFile(calls) || !Files.isRegularFile(summaryFile)) {
            throw new IOException(replay + " holds no " + ReplayRunner.RULE_INPUTS + " and " + ReplayRunner.SUMMARY
                    + " (replay it again with --for-tuning)");
        }
        JsonNode summary = Json.mapper().readTree(summaryFile.toFile());
        Instant from = instant(summary.get("from"));
        Instant to = instant(summary.get("to"));
        ReplayHint hint = new ReplayHint(configPath, summary.path("input").asText(null), null);
        List<Line> out = new ArrayList<>();
        try (BufferedReader reader = Files.newBufferedReader(calls, StandardCharsets.UTF_8)) {
            RuleInputs.rerun(reader, (stream, model, baseline) -> {
                MonitorDefinition monitor = MonitorDefinition.ofStream(config.monitors(), stream);
                if (!monitor.ruleInputsKey().equals(model)) {
                    throw new IllegalArgumentException("monitor " + monitor.name() + " differs from the replay's "
                            + "in more than its rules (replayed: " + model + "; here: " + monitor.ruleInputsKey()
                            + "): only the rules sections may differ");
                }
                return monitor.alertEngine(stream, baseline, hint);
            }, alert -> {
                if (ReplayRunner.inRange(from, to, alert.windowStart(), alert.windowEnd())) {
                    MonitorDefinition monitor = MonitorDefinition.ofStream(config.monitors(), alert.stream());
                    out.add(new Line(alert, PublishedAlert.json(alert, monitor.outputs().smallCells())));
                }
            });
        }
        return out;
    }

    private static Instant instant(JsonNode node) {
        return node == null || node.isNull() ? null : Instant.parse(node.asText());
    }
}
