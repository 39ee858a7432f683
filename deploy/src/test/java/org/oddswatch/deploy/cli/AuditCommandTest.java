package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.deploy.audit.AuditSummary;

/**
 * {@code audit} against a real replay: 20 simulated weeks at 2,000 events a week through the example
 * definition raise at least three alert messages after the week-16 change. A recorded file equal to
 * the replay's alerts.jsonl but with one message removed, one added and one changed is reported
 * exactly so; the identical file, and the same messages on a topic, agree.
 */
class AuditCommandTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    @TempDir
    static Path dir;

    static Path replay;
    static List<String> alerts;

    @BeforeAll
    static void replayASimulatedSpanThatRaisesAlerts() throws IOException {
        Path events = dir.resolve("events.jsonl");
        assertEquals(0, CommandLineTest.run("simulate", "--rate", "2000", "--duration", "20w", "--out",
                events.toString()).status());
        replay = dir.resolve("replay");
        CommandLineTest.Result r = CommandLineTest.run("replay", "--config", EXAMPLE.toString(), "--input",
                events.toString(), "--out", replay.toString());
        assertEquals(0, r.status(), r.err());
        alerts = Files.readAllLines(replay.resolve("alerts.jsonl"), StandardCharsets.UTF_8);
        assertTrue(alerts.size() >= 3, "at least three alert messages: " + alerts.size());
    }

    private static Path write(String name, List<String> lines) throws IOException {
        Path file = dir.resolve(name);
        Files.write(file, lines, StandardCharsets.UTF_8);
        return file;
    }

    private static JsonNode key(JsonNode alert) {
        ObjectNode key = Json.mapper().createObjectNode();
        for (String f : List.of("id", "state", "windowEnd")) {
            key.set(f, alert.get(f));
        }
        return key;
    }

    private static JsonNode tree(String line) throws IOException {
        return Json.mapper().readTree(line);
    }

    @Test
    void oneRemovedOneAddedOneChangedAreReportedExactlySo() throws IOException {
        List<String> sent = new ArrayList<>(alerts);
        JsonNode removed = tree(sent.remove(0));
        // changed: the live message counted fewer events in its window than the replay
        ObjectNode changed = (ObjectNode) tree(sent.get(0));
        JsonNode replayed = changed.deepCopy();
        changed.put("events", changed.get("events").asLong() - 7);
        sent.set(0, Json.mapper().writeValueAsString(changed));
        // added: another episode a year after the replay's last window
        ObjectNode added = (ObjectNode) tree(sent.get(sent.size() - 1));
        added.put("id", "00000000000000000000beef");
        added.put("windowStart", Instant.parse(added.get("windowStart").asText()).plus(Duration.ofDays(364)).toString());
        added.put("windowEnd", Instant.parse(added.get("windowEnd").asText()).plus(Duration.ofDays(364)).toString());
        sent.add(Json.mapper().writeValueAsString(added));

        Path groups = dir.resolve("audit.json");
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent", write("sent.jsonl", sent).toString(),
                "--replay", replay.toString(), "--out", groups.toString());
        assertEquals(1, r.status(), r.out() + r.err());
        JsonNode doc = Json.mapper().readTree(groups.toFile());
        assertEquals(alerts.size() - 2, doc.get("matched").size(), r.out());
        assertEquals(1, doc.get("missing").size(), r.out());
        assertEquals(1, doc.get("extra").size(), r.out());
        assertEquals(1, doc.get("differing").size(), r.out());
        assertEquals(key(removed), doc.at("/missing/0/key"));
        assertEquals(key(added), doc.at("/extra/0/key"));
        assertEquals(key(replayed), doc.at("/differing/0/key"));
        assertEquals(1, doc.at("/differing/0/fields").size(), r.out());
        assertEquals("events", doc.at("/differing/0/fields/0/field").asText());
        assertEquals(replayed.get("events").asLong() - 7, doc.at("/differing/0/fields/0/sent").asLong());
        assertEquals(replayed.get("events").asLong(), doc.at("/differing/0/fields/0/replay").asLong());
        assertEquals("late-records", doc.at("/differing/0/reasons/0/code").asText());
        assertEquals("outside-replay", doc.at("/extra/0/reasons/0/code").asText());
        assertEquals(false, doc.get("agree").asBoolean());

        assertTrue(r.out().contains("  matched    " + (alerts.size() - 2) + "\n"), r.out());
        assertTrue(r.out().contains("  missing    1   in the replay, not sent\n"), r.out());
        assertTrue(r.out().contains("  extra      1   sent, not in the replay\n"), r.out());
        assertTrue(r.out().contains("  differing  1 "), r.out());
        assertTrue(r.out().contains("    events: sent " + (replayed.get("events").asLong() - 7) + ", replay "
                + replayed.get("events").asLong() + "\n"), r.out());
        assertTrue(r.out().contains(AuditSummary.CAUTION), r.out());
        assertTrue(r.out().contains("result: the sent alerts and the replay do not agree"), r.out());
    }

    @Test
    void theSameMessagesAgree() throws IOException {
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent",
                write("identical.jsonl", alerts).toString(), "--replay", replay.toString());
        assertEquals(0, r.status(), r.out() + r.err());
        assertTrue(r.out().contains("  matched    " + alerts.size() + "\n"), r.out());
        assertTrue(r.out().contains("result: the sent alerts and the replay agree"), r.out());
    }

    @Test
    void theLiveReplayCommandNamesTheTopicAndStillAgrees() throws IOException {
        List<String> sent = new ArrayList<>();
        for (String line : alerts) {
            ObjectNode alert = (ObjectNode) tree(line);
            String command = alert.get("replayCommand").asText();
            String live = command.replaceFirst("--input \\S+", "--topic clinic-tests");
            assertTrue(!live.equals(command), command);
            alert.put("replayCommand", live);
            alert.put("message", alert.get("message").asText().replace(command, live));
            sent.add(Json.mapper().writeValueAsString(alert));
        }
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent", write("live.jsonl", sent).toString(),
                "--replay", replay.toString());
        assertEquals(0, r.status(), r.out() + r.err());
    }

    @Test
    void otherLimitsAndABaselineUnderAnotherDefinitionAreNamedAsReasons() throws IOException {
        List<String> sent = new ArrayList<>(alerts);
        ObjectNode limit = (ObjectNode) tree(sent.get(0));
        limit.put("limit", limit.get("limit").asDouble() * 2);
        sent.set(0, Json.mapper().writeValueAsString(limit));
        ObjectNode baseline = (ObjectNode) tree(sent.get(1));
        String message = baseline.get("message").asText();
        java.util.regex.Matcher checksum = java.util.regex.Pattern.compile("definition ([0-9a-f]{64})").matcher(message);
        assertTrue(checksum.find(), message);
        baseline.put("message", message.replace(checksum.group(1), "0".repeat(64)));
        sent.set(1, Json.mapper().writeValueAsString(baseline));
        Path groups = dir.resolve("reasons.json");
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent", write("reasons.jsonl", sent).toString(),
                "--replay", replay.toString(), "--out", groups.toString());
        assertEquals(1, r.status(), r.out() + r.err());
        JsonNode doc = Json.mapper().readTree(groups.toFile());
        assertEquals(2, doc.get("differing").size(), r.out());
        for (JsonNode finding : doc.get("differing")) {
            boolean isLimit = finding.get("key").equals(key(limit));
            assertEquals(isLimit ? "limit" : "message", finding.at("/fields/0/field").asText(), r.out());
            assertEquals("definition", finding.at("/reasons/0/code").asText(), r.out());
            assertTrue(finding.at("/reasons/0/detail").asText().contains(isLimit ? "limit sent" : "0".repeat(64)),
                    r.out());
        }
    }

    @Test
    void theAlertsTopicDeliveredAtLeastOnceAgrees() throws IOException {
        KAFKA.createTopic("audit-alerts", 2);
        List<String> keys = new ArrayList<>();
        List<byte[]> values = new ArrayList<>();
        for (String line : alerts) {
            keys.add(tree(line).get("id").asText());
            values.add(line.getBytes(StandardCharsets.UTF_8));
        }
        // at least once: the first message again, as after a restart
        keys.add(keys.get(0));
        values.add(values.get(0));
        KAFKA.produce("audit-alerts", keys, values);
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent-topic", "audit-alerts", "--bootstrap",
                KAFKA.bootstrapServers(), "--replay", replay.toString());
        assertEquals(0, r.status(), r.out() + r.err());
        assertTrue(r.out().startsWith("sent:   " + alerts.size() + " alert message(s) from topic audit-alerts, "
                + "1 repeat(s) with the same content dropped\n"), r.out());
    }

    @Test
    void aMissingOrBrokenReplayFolderIsAConfigurationError() throws IOException {
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent", dir.resolve("x.jsonl").toString(),
                "--replay", dir.resolve("absent").toString());
        assertEquals(2, r.status());
        assertEquals(1, r.errLines().size(), r.err());
        Path broken = Files.createDirectories(dir.resolve("broken"));
        Files.copy(replay.resolve("alerts.jsonl"), broken.resolve("alerts.jsonl"));
        Files.writeString(broken.resolve("summary.json"), "{\"streams\": [");
        CommandLineTest.Result b = CommandLineTest.run("audit", "--sent", replay.resolve("alerts.jsonl").toString(),
                "--replay", broken.toString());
        assertEquals(2, b.status(), b.err());
        assertEquals(List.of("oddswatch audit: --replay: " + broken.resolve("summary.json") + " is not a replay summary"),
                b.errLines());
    }

    @Test
    void kafkaOptionsWithASentFileAreAUsageError() {
        CommandLineTest.Result r = CommandLineTest.run("audit", "--sent", replay.resolve("alerts.jsonl").toString(),
                "--bootstrap", "localhost:1", "--replay", replay.toString());
        assertEquals(2, r.status(), r.out() + r.err());
        assertEquals(List.of("oddswatch audit: --bootstrap and --kafka apply only with --sent-topic, not with --sent FILE"),
                r.errLines());
        CommandLineTest.Result alone = CommandLineTest.run("audit", "--sent", replay.resolve("alerts.jsonl").toString(),
                "--replay", replay.toString());
        assertEquals(0, alone.status(), alone.out() + alone.err());
    }
}
