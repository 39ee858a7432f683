package org.oddswatch.ingest.baseline;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.ingest.baseline.BaselineBuilder.BaselineRequest;
import org.oddswatch.ingest.baseline.BaselineBuilder.BuiltBaseline;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.pipeline.HouseEvents;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.oddswatch.ingest.replay.EventFileReader;
import org.oddswatch.ingest.replay.InputFormat;
import org.oddswatch.ingest.pipeline.HouseEvents.HouseEvent;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.oddswatch.ingest.replay.ReplaySummary;

class BaselineBuilderTest {

    static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    static final Instant END = Instant.parse("2026-02-02T00:00:00Z");
    static final long WEEK = 7 * 86_400_000L;
    static final int LATE = 5;

    @TempDir
    Path dir;

    private Path events() throws Exception {
        List<String> lines = new ArrayList<>();
        for (HouseEvent event : HouseEvents.events(20260105, 6000, START, 10 * WEEK, 0, "north", "south")) {
            lines.add(event.json());
        }
        lines.add(3, "{garbage");
        lines.add(9, lines.get(8));
        // a record two weeks ahead of the stream (too far in the future for the pipeline) and, after
        // the period has closed, five records of the period that arrive too late: a replay's streams
        // do not accept them, so neither may the baseline
        lines.add(20, HouseEvents.json("future-1", START.plus(Duration.ofDays(15)), "north", true, false, "18-39",
                "female", true));
        for (int i = 0; i < LATE; i++) {
            lines.add(HouseEvents.json("late-" + i, START.plus(Duration.ofDays(3 + i)), "north", true, true, "65+",
                    "male", true));
        }
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
                new BaselineRequest(events, null, START, END, dir.resolve("baselines"), null, false, false),
                bytes -> { });
        assertEquals(List.of("respiratory/north", "respiratory/south"), built.stream().map(BuiltBaseline::stream).toList());
        List<StreamStatus> replayed = replayedStreams(config, events);
        for (int i = 0; i < built.size(); i++) {
            BuiltBaseline b = built.get(i);
            assertTrue(b.ok(), b.problem());
            assertEquals("frozen", b.state());
            assertEquals(4 * 3000 / 10, b.events(), "four of ten weeks, one region of two; not the late or future ones");
            assertEquals(replayed.get(i).baselineEvents(), b.model().events(), "complete events as the replay froze");
            assertEquals(replayed.get(i).baselinePositives(), b.model().cases(), "positives as the replay froze");
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

    /** The streams of a replay of {@code events} (fixed-period baseline of the definition). */
    private static List<StreamStatus> replayedStreams(MonitorConfig config, Path events) throws Exception {
        MonitorPipeline pipeline = new MonitorPipeline(events.toString(), config.monitors(), new PipelineListener() {
        }, PipelineSettings.defaults());
        EventFileReader.read(events, InputFormat.JSONL, new ReplayRunner.PipelineFeed(pipeline));
        pipeline.closeAll();
        List<StreamStatus> streams = pipeline.snapshot().streams();
        assertEquals("frozen", streams.get(0).baseline());
        assertEquals(LATE, streams.get(0).counts().outcome(Outcome.LATE), "the late records are late in a replay");
        assertEquals(1L, streams.get(0).counts().reasons().get(RejectReason.TOO_FAR_IN_FUTURE));
        return streams;
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
                new BaselineRequest(events, null, START, END, dir.resolve("pooled"), "respiratory", true, false),
                bytes -> { });
        assertEquals(1, pooled.size());
        assertEquals("respiratory", pooled.get(0).stream());
        assertEquals(2400, pooled.get(0).events());
        assertEquals("respiratory.json", pooled.get(0).file().getFileName().toString());

        List<BuiltBaseline> empty = BaselineBuilder.build(config, new BaselineRequest(events, null,
                Instant.parse("2030-01-01T00:00:00Z"), Instant.parse("2030-02-01T00:00:00Z"), dir.resolve("none"),
                null, false, false), bytes -> { });
        assertEquals(1, empty.size());
        assertNull(empty.get(0).file());
        assertTrue(empty.get(0).problem().startsWith("no accepted events"), empty.get(0).problem());
    }

    private static final String TINY = """
            monitors:
              - name: tiny
                input: {topic: tiny-tests}
                event:
                  id: /id
                  time: /collectedAt
                  outcome: {field: /result, positive: [positive], negative: [negative]}
                terms:
                  - {name: household_contact, field: /exposure/household, kind: binary, watched: true}
                window: {width: P28D, step: P7D, lateness: P1D, align: 2026-01-05T00:00:00Z}
            """;

    /**
     * 68 events with 3 positives cannot carry a baseline of one coefficient besides the intercept
     * (10 of the rarer outcome per coefficient): refused, unless weak models are allowed; then the
     * file is written and a replay using it flags the baseline as weak, with the reason.
     */
    @Test
    void aBaselineFromTooLittleInformationIsRefusedOrFlagged() throws Exception {
        List<String> lines = new ArrayList<>();
        for (int i = 0; i < 68; i++) {
            lines.add(HouseEvents.json("t" + i, START.plus(Duration.ofHours(6 * i)), "north", i % 3 == 0, false,
                    "18-39", "female", i % 25 == 1));
        }
        for (int i = 0; i < 200; i++) { // after the period: what a replay judges against the baseline
            lines.add(HouseEvents.json("a" + i, END.plus(Duration.ofHours(6 * i)), "north", i % 3 == 0, false,
                    "18-39", "female", i % 4 == 1));
        }
        Path events = dir.resolve("tiny.jsonl");
        Files.write(events, lines, StandardCharsets.UTF_8);
        Path definition = dir.resolve("tiny.yaml");
        Files.writeString(definition, TINY);
        MonitorConfig config = DefinitionLoader.load(definition, Map.of());

        BuiltBaseline refused = BaselineBuilder.build(config,
                new BaselineRequest(events, null, START, END, dir.resolve("b"), null, false, false),
                bytes -> { }).get(0);
        assertFalse(refused.ok());
        assertEquals("refused-weak", refused.state());
        assertNull(refused.file());
        assertEquals(68, refused.events());
        assertEquals(3, refused.positives());
        assertEquals("refused: too little information: 68 events, of which <5 positive, for 1 coefficient(s) besides "
                + "the intercept; at least 10 of the rarer outcome (10 per coefficient) are needed", refused.problem());
        assertFalse(Files.exists(dir.resolve("b").resolve("tiny.json")));

        BuiltBaseline weak = BaselineBuilder.build(config,
                new BaselineRequest(events, null, START, END, dir.resolve("b"), null, false, true),
                bytes -> { }).get(0);
        assertTrue(weak.ok());
        assertEquals("frozen-weak", weak.state());
        assertEquals(refused.weakness(), weak.weakness());
        assertTrue(Files.exists(weak.file()));

        Path withFile = dir.resolve("tiny-file.yaml");
        Files.writeString(withFile, TINY + "    baseline: {file: b/tiny.json}\n");
        ReplaySummary summary = ReplayRunner.run(ReplayRequest.of(withFile, events, dir.resolve("out")));
        MonitoringGap gap = summary.gaps().get(0);
        assertEquals(GapReason.BASELINE_WEAK, gap.reason());
        assertEquals("the baseline model rests on " + weak.weakness(), gap.detail());
        assertEquals("file", summary.streams().get(0).baseline(), "the weak baseline is used, and flagged");
        assertTrue(Files.readString(dir.resolve("out").resolve("report.md"))
                .contains("tiny: baseline weak (rules run on it) [baseline-weak]: the baseline model rests on too little"));
    }
}
