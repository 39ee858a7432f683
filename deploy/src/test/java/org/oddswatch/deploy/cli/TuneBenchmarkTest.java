package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;

/**
 * Time per setting of {@code oddswatch tune} on a year of weekly windows of ten streams: the
 * respiratory scenario (default rate) over 52 weeks, replayed with the example's monitors plus one
 * split by clinic (5 streams) and one split by sex (2), so 1 + 2 + 5 + 2 streams; then five
 * settings of the drift limit. Run with {@code mvn -Pbench -pl deploy -am verify -DskipITs
 * -Dtest=TuneBenchmarkTest -Dsurefire.failIfNoSpecifiedTests=false}.
 */
@Tag("benchmark")
class TuneBenchmarkTest {

    @TempDir
    Path dir;

    @Test
    void timePerSetting() throws Exception {
        String example = Files.readString(Path.of("examples/respiratory.yaml"), StandardCharsets.UTF_8);
        String byRegion = example.substring(example.indexOf("  - name: respiratory-by-region"));
        String byClinic = byRegion.replace("respiratory-by-region", "respiratory-by-clinic")
                .replace("split: {field: /region,", "split: {field: /clinic,");
        String bySex = byRegion.replace("respiratory-by-region", "respiratory-by-sex")
                .replace("split: {field: /region,", "split: {field: /sex,")
                .replaceAll("(?m)^      - \\{name: sex,.*\\n", "");
        Path definition = dir.resolve("ten-streams.yaml");
        Files.writeString(definition, example + byClinic + bySex, StandardCharsets.UTF_8);
        Path events = dir.resolve("events.jsonl");
        assertEquals(0, CommandLineTest.run("simulate", "--duration", "52w", "--out", events.toString()).status());
        Path replay = dir.resolve("replay");
        long start = System.nanoTime();
        CommandLineTest.Result r = CommandLineTest.run("replay", "--for-tuning", "--config", definition.toString(), "--input",
                events.toString(), "--out", replay.toString());
        assertEquals(0, r.status(), r.err());
        double replaySeconds = (System.nanoTime() - start) / 1e9;
        JsonNode summary = Json.mapper().readTree(replay.resolve("summary.json").toFile());
        assertEquals(10, summary.get("streams").size());
        for (int round = 0; round < 3; round++) {
            Path out = dir.resolve("tuned-" + round);
            start = System.nanoTime();
            r = CommandLineTest.run("tune", "--replay", replay.toString(), "--config", definition.toString(),
                    "--try", "oddsRatioDrift.limit=2.5,2.75,3,3.25,3.5", "--out", out.toString());
            double seconds = (System.nanoTime() - start) / 1e9;
            assertEquals(0, r.status(), r.err());
            List<String> settings = Files.readAllLines(out.resolve(TuneCommand.SETTINGS));
            System.out.printf("tune round %d: %d settings in %.2f s, %.3f s per setting (replay %.1f s, "
                    + "rules-input.jsonl %,d bytes, %d final windows)%n", round, settings.size(), seconds,
                    seconds / settings.size(), replaySeconds, Files.size(replay.resolve("rules-input.jsonl")),
                    summary.get("finalWindows").asLong());
        }
    }
}
