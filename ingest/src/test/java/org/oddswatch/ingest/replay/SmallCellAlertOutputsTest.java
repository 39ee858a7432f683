package org.oddswatch.ingest.replay;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * A CUSUM alert raised in a window with a handful of events, through the one output stage to every
 * file a replay writes: {@code alerts.jsonl}, {@code incidents.jsonl} and {@code report.md} hold none
 * of the figures the window's estimate withholds, and say they are withheld. With a limit of 2 (only
 * a count of 1 withheld) the same replay shows them: the twin that names the figures to look for.
 */
class SmallCellAlertOutputsTest {

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");

    private static String definition(int withholdBelow) {
        return """
                monitors:
                  - name: sparse
                    input: {topic: sparse-tests}
                    event:
                      id: /id
                      time: /collectedAt
                      outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                    window: {width: P7D, step: P7D, lateness: P1D, align: 2026-01-05T00:00:00Z}
                    baseline: {from: 2026-01-05T00:00:00Z, to: 2026-03-02T00:00:00Z}
                    rules:
                      guard: {minEvents: 0}
                      oddsRatioDrift: {enabled: false}
                      calibration: {enabled: false}
                      oddsRatioCusum: {enabled: false}
                      cusum: {up: 2.0, limit: 2.0}
                    outputs: {withholdCountsBelow: %d}
                """.formatted(withholdBelow);
    }

    /** Eight baseline weeks at about 10 % positive, then one week of six events, four of them positive. */
    private static List<String> events() {
        Random random = new Random(7);
        List<String> out = new ArrayList<>();
        long step = Duration.ofDays(56).toMillis() / 4000;
        for (int i = 0; i < 4000; i++) {
            boolean household = random.nextDouble() < 0.3;
            boolean positive = random.nextDouble() < (household ? 0.2 : 0.06);
            out.add(event("b" + i, START.plusMillis(i * step), positive, household));
        }
        Instant week = Instant.parse("2026-03-03T00:00:00Z");
        for (int i = 0; i < 6; i++) {
            out.add(event("s" + i, week.plus(Duration.ofHours(6L * i)), i < 4, i % 2 == 0));
        }
        // later events move the watermark so that week's window is final
        out.add(event("late", Instant.parse("2026-03-20T00:00:00Z"), false, false));
        return out;
    }

    private static String event(String id, Instant time, boolean positive, boolean household) {
        return "{\"id\":\"" + id + "\",\"collectedAt\":\"" + time + "\",\"result\":\"" + (positive ? "positive" : "negative")
                + "\",\"exposure\":{\"household\":\"" + (household ? "yes" : "no") + "\"}}";
    }

    private static Path replay(Path dir, int withholdBelow) throws Exception {
        Path input = dir.resolve("events.jsonl");
        Files.write(input, events(), StandardCharsets.UTF_8);
        MonitorConfig config = DefinitionLoader.parse("sparse.yaml", definition(withholdBelow), Map.of(), null);
        Path out = dir.resolve("out-" + withholdBelow);
        ReplayRunner.run(config, new ReplayRequest(null, input, out, null, null, null, null, false));
        return out;
    }

    private static List<JsonNode> lines(Path file) throws Exception {
        List<JsonNode> out = new ArrayList<>();
        for (String line : Files.readAllLines(file, StandardCharsets.UTF_8)) {
            out.add(Json.mapper().readTree(line));
        }
        return out;
    }

    @Test
    void everyFileOfAReplayWithholdsTheFiguresOfASmallWindowsAlert(@TempDir Path dir) throws Exception {
        Path shown = replay(dir, 2);
        Path withheld = replay(dir, 5);
        List<JsonNode> twins = lines(shown.resolve(ReplayRunner.ALERTS)).stream()
                .filter(a -> a.path("windowEnd").asText().equals("2026-03-09T00:00:00Z")).toList();
        assertEquals(1, twins.size(), "the CUSUM signals in the sparse week: " + twins);
        JsonNode twin = twins.get(0);
        assertEquals("raised", twin.path("state").asText());
        assertFalse(twin.has("withheld"), twin.toString());
        double value = twin.path("value").asDouble();
        assertTrue(value > 2.0, "above h = 2: " + value);

        JsonNode alert = lines(withheld.resolve(ReplayRunner.ALERTS)).stream()
                .filter(a -> a.path("id").asText().equals(twin.path("id").asText())).findFirst().orElseThrow();
        assertFalse(alert.has("value") || alert.has("observed") || alert.path("evidence").has("cusum"), alert.toString());
        List<String> fields = new ArrayList<>();
        alert.path("withheld").forEach(w -> fields.add(w.path("field").asText() + ": " + w.path("reason").asText()));
        assertEquals(List.of("value: positives from 1 to 4", "observed: positives from 1 to 4",
                "evidence.cusum: positives from 1 to 4"), fields, alert.toString());
        assertTrue(alert.path("message").asText().contains("withheld for small numbers"), alert.toString());
        String stat = Format.stat(value);
        for (String file : List.of(ReplayRunner.ALERTS, ReplayRunner.INCIDENTS, "report.md")) {
            String text = Files.readString(withheld.resolve(file), StandardCharsets.UTF_8);
            assertFalse(text.contains(stat) || text.contains(String.valueOf(value)),
                    file + " states the withheld value " + value + ":\n" + text);
            assertTrue(Files.readString(shown.resolve(file), StandardCharsets.UTF_8).contains(stat)
                    || Files.readString(shown.resolve(file), StandardCharsets.UTF_8).contains(String.valueOf(value)),
                    "the twin's " + file + " states it");
        }
        assertTrue(Files.readString(withheld.resolve("report.md")).contains("withheld for small numbers"));
        JsonNode incident = lines(withheld.resolve(ReplayRunner.INCIDENTS)).get(0);
        assertEquals("value", incident.path("evidence").get(0).path("withheld").get(0).path("field").asText(),
                incident.toString());
    }
}
