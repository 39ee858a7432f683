package org.oddswatch.deploy.cli;

import com.fasterxml.jackson.core.JsonProcessingException;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.Callable;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.deploy.audit.AlertAudit;
import org.oddswatch.deploy.audit.AlertLog;
import org.oddswatch.deploy.audit.AuditResult;
import org.oddswatch.deploy.audit.AuditSummary;
import org.oddswatch.deploy.audit.ReplayCoverage;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch audit}: the alerts the live service sent against a replay's. */
@Command(name = "audit", mixinStandardHelpOptions = true,
        description = {"Compare the alert messages the live service sent with a replay's alerts.jsonl.",
            "Messages match by episode id, state and window end. Prints how many matched, are missing (in the replay, "
            + "not sent), extra (sent, not in the replay) or differing (same message, other content: the fields named), "
            + "each unmatched one with its likely reason where the alerts show it (other limits or baseline, records "
            + "that arrived after the live decision, a window the replay did not cover), else 'unknown'. "
            + "Exit status 0 when they agree, 1 when they do not, 2 for a usage or configuration error."})
final class AuditCommand implements Callable<Integer> {

    /** Exit status when the alerts do not agree. */
    static final int DISAGREE = 1;

    /** Where the sent alerts come from. */
    static final class SentArgs {
        @Option(names = "--sent", paramLabel = "FILE", description = "Alert messages as sent, JSON Lines (one alert JSON a line, as on the alerts topic).")
        Path file;

        @Option(names = "--sent-topic", paramLabel = "TOPIC", description = "Read the sent alert messages from this Kafka topic (every partition, from the beginning; --bootstrap, --kafka and ODDSWATCH_KAFKA_* apply).")
        String topic;
    }

    @ArgGroup(exclusive = true, multiplicity = "1")
    SentArgs sent;

    @Option(names = "--replay", required = true, paramLabel = "DIR", description = "A replay folder (oddswatch replay --out DIR): its alerts.jsonl and summary.json.")
    Path replay;

    @Option(names = "--from", paramLabel = "TIME", description = "Compare only messages whose window ends at or after this time (RFC 3339 or a date), on both sides.")
    Instant from;

    @Option(names = "--to", paramLabel = "TIME", description = "Compare only messages whose window ends at or before this time, on both sides.")
    Instant to;

    @Option(names = "--out", paramLabel = "FILE", description = "Also write the groups as JSON to this file.")
    Path out;

    @Mixin
    KafkaOptions kafka;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        if (from != null && to != null && from.isAfter(to)) {
            throw UserError.config("--from must not lie after --to");
        }
        if (sent.file != null && (kafka.bootstrap != null || !kafka.properties.isEmpty())) {
            throw UserError.config("--bootstrap and --kafka apply only with --sent-topic, not with --sent FILE");
        }
        Path replayAlerts = DefinitionFile.requireFile(replay.resolve("alerts.jsonl"), "--replay");
        Path summary = DefinitionFile.requireFile(replay.resolve("summary.json"), "--replay");
        AlertLog replayed = AlertLog.read(replayAlerts, replayAlerts.toString(), from, to);
        AlertLog sentLog;
        if (sent.file != null) {
            sentLog = AlertLog.read(DefinitionFile.requireFile(sent.file, "--sent"), sent.file.toString(), from, to);
        } else {
            Properties props = kafka.clientProps(System.getenv());
            Map<String, String> settings = new LinkedHashMap<>();
            props.stringPropertyNames().forEach(k -> settings.put(k, props.getProperty(k)));
            try (TopicSnapshot snapshot = TopicSnapshot.read(settings, sent.topic, null)) {
                sentLog = AlertLog.read(snapshot.file(), "topic " + sent.topic, from, to);
            }
        }
        ReplayCoverage coverage;
        try {
            coverage = ReplayCoverage.read(summary);
        } catch (JsonProcessingException | DateTimeParseException e) {
            throw UserError.config("--replay: " + summary + " is not a replay summary", e);
        }
        AuditResult result = AlertAudit.compare(sentLog, replayed, coverage);
        PrintWriter w = spec.commandLine().getOut();
        w.print(AuditSummary.describe(result, sentLog, replayed));
        if (out != null) {
            write(result, sentLog, replayed);
            w.println("wrote " + out);
        }
        w.flush();
        return result.agree() ? 0 : DISAGREE;
    }

    private void write(AuditResult result, AlertLog sentLog, AlertLog replayed) throws IOException {
        Map<String, Object> doc = new LinkedHashMap<>();
        doc.put("sent", sentLog.source());
        doc.put("replay", replayed.source());
        doc.put("from", from);
        doc.put("to", to);
        doc.put("agree", result.agree());
        doc.put("matched", result.matched());
        doc.put("missing", result.missing());
        doc.put("extra", result.extra());
        doc.put("differing", result.differing());
        doc.put("notCompared", result.problems());
        doc.put("caution", AuditSummary.CAUTION);
        Path parent = out.toAbsolutePath().getParent();
        if (parent != null) {
            Files.createDirectories(parent);
        }
        Json.mapper().writerWithDefaultPrettyPrinter().writeValue(out.toFile(), doc);
    }
}
