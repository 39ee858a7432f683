package org.oddswatch.deploy.audit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Reading one side of an audit: repeats, lines that are not alerts, the window range. */
class AlertLogTest {

    @TempDir
    Path dir;

    private static String alert(String id, String state, String windowEnd, long events) {
        return "{\"id\":\"" + id + "\",\"stream\":\"s\",\"rule\":\"calibration\",\"subject\":{\"term\":\"calibration\"},"
                + "\"state\":\"" + state + "\",\"windowEnd\":\"" + windowEnd + "\",\"events\":" + events + "}";
    }

    private AlertLog read(List<String> lines, Instant from, Instant to) throws IOException {
        Path file = Files.write(dir.resolve("a.jsonl"), lines);
        return AlertLog.read(file, "a.jsonl", from, to);
    }

    @Test
    void repeatsWithTheSameContentAreDroppedAndOthersAreProblems() throws IOException {
        String a = alert("a1", "raised", "2026-05-04T00:00:00Z", 900);
        AlertLog log = read(List.of(a, a, alert("a1", "raised", "2026-05-04T00:00:00Z", 901), "", "{oops", "[1]",
                "{\"id\":\"x\",\"state\":\"raised\"}", alert("a1", "continuing", "2026-05-11T00:00:00Z", 950)), null, null);
        assertEquals(2, log.messages().size());
        assertEquals(1, log.repeats());
        assertEquals(List.of(
                "a.jsonl:3: repeats the raised message of a1 for the window ending 2026-05-04T00:00:00Z with other content (the first is compared)",
                "a.jsonl:4: empty line", "a.jsonl:5: not JSON", "a.jsonl:6: not a JSON object",
                "a.jsonl:7: no windowEnd (not an alert message)"), log.problems());
        assertEquals(900, log.messages().get(new MessageKey("a1", "raised", Instant.parse("2026-05-04T00:00:00Z")))
                .get("events").asLong());
    }

    @Test
    void theRangeBoundsAreWindowEndsBothIncluded() throws IOException {
        AlertLog log = read(List.of(alert("a", "raised", "2026-05-04T00:00:00Z", 1),
                alert("a", "continuing", "2026-05-11T00:00:00Z", 1), alert("a", "cleared", "2026-05-18T00:00:00Z", 1),
                alert("a", "cleared", "2026-05-25T00:00:00Z", 1)),
                Instant.parse("2026-05-11T00:00:00Z"), Instant.parse("2026-05-18T00:00:00Z"));
        assertEquals(List.of("continuing", "cleared"), log.messages().keySet().stream().map(MessageKey::state).toList());
        assertEquals(2, log.outsideRange());
    }

    @Test
    void aProblemLineMeansTheSidesDoNotAgree() throws IOException {
        String a = alert("a1", "raised", "2026-05-04T00:00:00Z", 900);
        AlertLog sent = read(List.of(a, "not json"), null, null);
        AlertLog replay = read(List.of(a), null, null);
        AuditResult result = AlertAudit.compare(sent, replay, new ReplayCoverage(null, null, Map.of()));
        assertEquals(1, result.matched().size());
        assertTrue(result.missing().isEmpty() && result.extra().isEmpty() && result.differing().isEmpty());
        assertFalse(result.agree());
    }
}
