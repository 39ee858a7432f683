package org.oddswatch.ingest.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
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
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.baseline.BaselineBuilder;
import org.oddswatch.ingest.baseline.BaselineBuilder.BaselineRequest;
import org.oddswatch.ingest.baseline.BaselineBuilder.BuiltBaseline;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * The odds-ratio step CUSUM of a stream with a baseline file continues after a restart from the state
 * published with a final window ({@code stepCusum} on the estimate), so the alerts after a short
 * re-read equal the uninterrupted run's, byte for byte; started again at 0 they differ.
 */
class StepCusumRestartTest {

    private static final Instant D0 = MonitorPipelineTest.D0;
    private static final long DAY = 86_400_000L;
    /** What the service re-reads before the committed record: width + step + lateness, and margins. */
    private static final long LOOK_BACK = 2 * DAY + DAY + 6 * 3_600_000L + 6 * 3_600_000L;

    @TempDir
    Path dir;

    /** The step CUSUM alone, with a limit high enough that a chart takes several steps to signal. */
    private static String definition(String baseline) {
        return MonitorPipelineTest.DEFINITION.replace(MonitorPipelineTest.NO_RULES, "    baseline: " + baseline + "\n"
                + "    rules: {calibration: {enabled: false}, cusum: {enabled: false},"
                + " oddsRatioCusum: {reference: 0.5, limit: 6.0}, guard: {minEvents: 100}}");
    }

    private static MonitorPipeline pipeline(String definition, CollectingListener listener) throws Exception {
        MonitorConfig config = DefinitionLoader.parse("test.yaml", definition, Map.of(), null);
        return new MonitorPipeline("clinic-tests", config.monitors(), listener, PipelineSettings.defaults());
    }

    @Test
    void theStepChartGoesOnFromItsPublishedStateAfterARestart() throws Exception {
        // 14 days at 2,000 events a day; the household-contact log odds ratio rises by 0.5 from day 3
        List<String> records = new ArrayList<>();
        List<Instant> times = new ArrayList<>();
        for (HouseEvents.HouseEvent e : HouseEvents.events(71, 28_000, D0, 14 * DAY, 0, D0.plusMillis(3 * DAY), 0.5,
                "north")) {
            records.add(e.json());
            times.add(e.time());
        }
        Path events = dir.resolve("events.jsonl");
        Files.write(events, records, StandardCharsets.UTF_8);
        String fixed = definition("{from: 2026-02-02T00:00:00Z, to: 2026-02-05T00:00:00Z}");
        List<BuiltBaseline> built = BaselineBuilder.build(DefinitionLoader.parse("test.yaml", fixed, Map.of(), null),
                new BaselineRequest(events, null, D0, D0.plusMillis(3 * DAY), dir.resolve("baselines"), null, false,
                        false), bytes -> { });
        assertTrue(built.get(0).ok(), built.get(0).problem());
        String withFile = definition("{file: '" + built.get(0).file().toAbsolutePath() + "'}");

        CollectingListener uninterrupted = new CollectingListener();
        MonitorPipeline reference = pipeline(withFile, uninterrupted);
        for (int i = 0; i < records.size(); i++) {
            reference.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
        }
        reference.closeAll();
        List<String> expected = uninterrupted.alerts.stream().map(Json::write).toList();
        assertTrue(uninterrupted.alerts.stream().filter(a -> a.rule().equals("odds-ratio-cusum")).count() >= 3,
                "step CUSUM messages to stop among: " + expected + " charts: " + uninterrupted.estimates.stream()
                        .filter(e -> e.stepCusum() != null).map(e -> e.stepCusum().toString()).toList());
        assertTrue(uninterrupted.estimates.stream().anyMatch(e -> e.stepCusum() != null
                && e.stepCusum().stream().anyMatch(v -> v.upper() > 0 && v.upperStart() != null)),
                "a published step chart standing above 0");

        int differentFromZero = 0;
        for (int stop : new int[] {11_000, 15_000, 19_000, 23_000}) {
            long rereadFrom = times.get(stop).toEpochMilli() - LOOK_BACK;
            int from = 0;
            while (times.get(from).toEpochMilli() < rereadFrom) {
                from++;
            }
            CollectingListener first = new CollectingListener();
            MonitorPipeline before = pipeline(withFile, first);
            for (int i = 0; i < stop; i++) {
                before.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
            }
            assertEquals(expected, restart(withFile, records, first, from, stop, rereadFrom, true),
                    "stopped after record " + stop + ", re-read from record " + from);
            differentFromZero += restart(withFile, records, first, from, stop, rereadFrom, false).equals(expected) ? 0 : 1;
        }
        assertTrue(differentFromZero >= 1, "restarting the step chart at 0 changes the alerts after some of the stops");
    }

    /** The second run of a restart: alerts and published estimates read back, a re-read, then live. */
    private static List<String> restart(String definition, List<String> records, CollectingListener first, int from,
                                        int stop, long rereadFrom, boolean resume) throws Exception {
        List<Alert> readBack = new ArrayList<>();
        for (Alert a : first.alerts) {
            readBack.add(Json.mapper().readValue(Json.write(a), Alert.class));
        }
        CusumHistory history = new CusumHistory();
        for (WindowEstimate e : first.estimates) {
            if (e.status() == WindowStatus.FINAL) {
                assertTrue(history.add(PublishedEstimate.json(e, SmallCellPolicy.DEFAULT)
                        .getBytes(StandardCharsets.UTF_8)));
            }
        }
        CollectingListener second = new CollectingListener();
        MonitorPipeline after = pipeline(definition, second);
        after.restoreAlerts(readBack);
        if (resume) {
            after.resumeCharts(history, rereadFrom);
        }
        for (int i = from; i < records.size(); i++) {
            after.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), i < stop);
        }
        after.closeAll();
        List<String> combined = new ArrayList<>();
        first.alerts.forEach(a -> combined.add(Json.write(a)));
        second.alerts.forEach(a -> combined.add(Json.write(a)));
        return combined;
    }
}
