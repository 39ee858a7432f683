package org.oddswatch.ingest.baseline;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.HouseEvents;
import org.oddswatch.ingest.pipeline.HouseEvents.HouseEvent;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

class BaselineBuilderTest {

    static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    static final Instant END = Instant.parse("2026-02-02T00:00:00Z");
    static final long WEEK = 7 * 86_400_000L;

    @TempDir
    Path dir;

    private Path events() throws Exception {
        List<String> lines = new ArrayList<>();
        for (HouseEvent event : HouseEvents.events(20260105, 6000, START, 10 * WEEK, 0, "north", "south")) {
            lines.add(event.json());
        }
        lines.add(3, "{garbage");
        lines.add(9, lines.get(8));
        Path file = dir.resolve("events.jsonl");
        Files.write(file, lines, StandardCharsets.UTF_8);
        return file;
    }

    private static Path definition() throws Exception {
        return Path.of(BaselineBuilderTest.class.getResource("/replay/replay.yaml").toURI());
    }

    /**
     * A baseline built from the file, frozen and read back by the pipeline, gives the same estimates
     * as the same period fitted live (fixed-period baseline) for every window after the period.
     */
    @Test
    void builtBaselinesEqualTheFixedPeriodBaselineOfAReplay() throws Exception {
        Path events = events();
        MonitorConfig config = DefinitionLoader.load(definition(), Map.of());
        List<BuiltBaseline> built = BaselineBuilder.build(config,
                new BaselineRequest(events, null, START, END, dir.resolve("baselines"), null, false));
        assertEquals(List.of("respiratory/north", "respiratory/south"), built.stream().map(BuiltBaseline::stream).toList());
        for (BuiltBaseline b : built) {
            assertTrue(b.ok(), b.problem());
            assertEquals(4 * 3000 / 10, b.events(), "four of ten weeks, one region of two");
            BaselineModel read = BaselineFile.read(b.file(), config.monitors().get(0).designCoder().columns());
            assertArrayEquals(b.model().coefficients(), read.coefficients());
            assertEquals(config.monitors().get(0).checksum(), read.definitionChecksum());
        }
        assertEquals("respiratory-north.json", built.get(0).file().getFileName().toString());

        String fixed = Files.readString(definition());
        String frozen = fixed.replace("baseline: {from: 2026-01-05T00:00:00Z, to: 2026-02-02T00:00:00Z}",
                "baseline: {file: \"baselines/respiratory-{split}.json\"}");
        assertFalse(fixed.equals(frozen));
        Path frozenDefinition = dir.resolve("frozen.yaml");
        Files.writeString(frozenDefinition, frozen);
        ReplayRunner.run(ReplayRequest.of(definition(), events, dir.resolve("fixed")));
        ReplayRunner.run(ReplayRequest.of(frozenDefinition, events, dir.resolve("frozen")));
        List<String> afterFixed = after(dir.resolve("fixed"));
        List<String> afterFrozen = after(dir.resolve("frozen"));
        assertEquals(2 * 9, afterFixed.size());
        assertEquals(afterFixed, afterFrozen);
    }

    /** Estimates of windows ending after the baseline period (2026-02-02 plus one step onwards). */
    private static List<String> after(Path out) throws Exception {
        List<String> kept = new ArrayList<>();
        for (String line : Files.readAllLines(out.resolve(ReplayRunner.ESTIMATES))) {
            String end = line.substring(line.indexOf("\"windowEnd\":\"") + 13).substring(0, 20);
            if (Instant.parse(end).isAfter(END)) {
                kept.add(line);
            }
        }
        return kept;
    }

    @Test
    void pooledBaselineAndEmptyPeriods() throws Exception {
        Path events = events();
        MonitorConfig config = DefinitionLoader.load(definition(), Map.of());
        List<BuiltBaseline> pooled = BaselineBuilder.build(config,
                new BaselineRequest(events, null, START, END, dir.resolve("pooled"), "respiratory", true));
        assertEquals(1, pooled.size());
        assertEquals("respiratory", pooled.get(0).stream());
        assertEquals(2400, pooled.get(0).events());
        assertEquals("respiratory.json", pooled.get(0).file().getFileName().toString());

        List<BuiltBaseline> empty = BaselineBuilder.build(config, new BaselineRequest(events, null,
                Instant.parse("2030-01-01T00:00:00Z"), Instant.parse("2030-02-01T00:00:00Z"), dir.resolve("none"),
                null, false));
        assertEquals(1, empty.size());
        assertNull(empty.get(0).file());
        assertTrue(empty.get(0).problem().startsWith("no accepted events"), empty.get(0).problem());
    }
}
