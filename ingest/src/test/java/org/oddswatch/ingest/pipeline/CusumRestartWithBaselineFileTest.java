package org.oddswatch.ingest.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.baseline.BaselineBuilder;
import org.oddswatch.ingest.baseline.BaselineBuilder.BaselineRequest;
import org.oddswatch.ingest.baseline.BaselineBuilder.BuiltBaseline;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * A stream with a baseline file is rebuilt after a restart from a short re-read (the open windows),
 * not from its start: its CUSUM charts continue from the values published with a final window, so
 * the alerts after the restart equal those of the uninterrupted run, byte for byte.
 */
class CusumRestartWithBaselineFileTest {

    private static final Instant D0 = MonitorPipelineTest.D0;
    private static final long DAY = 86_400_000L;
    /** What the service re-reads before the committed record: width + step + lateness, and a margin of 6 h. */
    private static final long LOOK_BACK = 2 * DAY + DAY + 6 * 3_600_000L + 6 * 3_600_000L;

    /** The rise of the household-contact log odds ratio: small, so the upper chart climbs for a while between signals. */
    private static final double SHIFT = 0.6;

    @TempDir
    Path dir;

    private static final class Run extends CollectingListener {
        final List<String> cusumChecks = new ArrayList<>();

        @Override
        public void onCusum(String stream, List<CusumReading> readings) {
            // after the windows closed, the charts stand where the newest final estimate says
            WindowEstimate last = null;
            for (WindowEstimate e : estimates) {
                if (e.stream().equals(stream) && e.status() == WindowStatus.FINAL) {
                    last = e;
                }
            }
            if (last == null || last.cusum() == null) {
                return;
            }
            for (int i = 0; i < readings.size(); i++) {
                CusumReading r = readings.get(i);
                CusumValue v = last.cusum().get(i);
                assertEquals(r.rule(), v.rule());
                assertEquals(r.subject().label(), v.subject().level() == null ? v.subject().term()
                        : v.subject().term() + "=" + v.subject().level());
                assertEquals(r.value(), v.value(), 0.0, "chart value at " + last.windowEnd());
                assertEquals(r.limit(), v.limit(), 0.0);
                cusumChecks.add(last.windowEnd() + " " + v.rule());
            }
        }
    }

    private String definition(String baseline) {
        return MonitorPipelineTest.DEFINITION.replace(MonitorPipelineTest.NO_RULES, "    baseline: " + baseline + "\n"
                + "    rules: {oddsRatioDrift: {enabled: false}, calibration: {enabled: false}, cusum: {limit: 8.0},"
                + " guard: {minEvents: 100}}");
    }

    private MonitorPipeline pipeline(String definition, PipelineListener listener) throws Exception {
        MonitorConfig config = DefinitionLoader.parse("test.yaml", definition, Map.of(), null);
        return new MonitorPipeline("clinic-tests", config.monitors(), listener, PipelineSettings.defaults());
    }

    @Test
    void restartAfterTheChartsStartedGivesTheUninterruptedAlerts() throws Exception {
        // 14 days at 2,000 events a day; the household-contact log odds ratio rises by 0.6 from day 3,
        // after the baseline period (days 0 to 3), so the upper chart signals and keeps on signalling
        List<String> records = new ArrayList<>();
        List<Instant> times = new ArrayList<>();
        for (HouseEvents.HouseEvent e : HouseEvents.events(33, 28_000, D0, 14 * DAY, 0, D0.plusMillis(3 * DAY), SHIFT,
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

        Run uninterrupted = new Run();
        MonitorPipeline reference = pipeline(withFile, uninterrupted);
        for (int i = 0; i < records.size(); i++) {
            reference.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
        }
        reference.closeAll();
        List<String> expected = uninterrupted.alerts.stream().map(Json::write).toList();
        assertTrue(uninterrupted.alerts.stream().filter(a -> a.rule().equals("bernoulli-cusum-up")).count() >= 4,
                "episodes to stop in: " + expected.size());
        assertTrue(uninterrupted.cusumChecks.size() >= 20, "chart values checked: " + uninterrupted.cusumChecks.size());
        checkMaxAgainstSignals(uninterrupted);

        int differentFromZero = 0;
        for (int stop : new int[] {13_000, 17_000, 21_000, 24_000}) {
            long rereadFrom = times.get(stop).toEpochMilli() - LOOK_BACK;
            int from = 0;
            while (times.get(from).toEpochMilli() < rereadFrom) {
                from++;
            }
            Run first = new Run();
            MonitorPipeline before = pipeline(withFile, first);
            for (int i = 0; i < stop; i++) {
                before.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
            }
            boolean signalledBefore = first.alerts.stream().anyMatch(a -> a.rule().startsWith("bernoulli-cusum")
                    && a.windowEnd().toEpochMilli() <= rereadFrom);
            List<String> combined = restart(withFile, records, first, from, stop, rereadFrom, true);
            assertEquals(expected, combined, "stopped after record " + stop + ", re-read from record " + from);
            // without the published chart values the charts start again at 0 and the alerts differ
            List<String> fromZero = restart(withFile, records, first, from, stop, rereadFrom, false);
            differentFromZero += signalledBefore && !fromZero.equals(expected) ? 1 : 0;
        }
        assertTrue(differentFromZero >= 1, "restarting the charts at 0 changes the alerts after some of the stops");
    }

    /** The second run of a restart: alerts and published estimates read back, a re-read, then live. */
    private List<String> restart(String definition, List<String> records, Run first, int from, int stop,
                                 long rereadFrom, boolean resume) throws Exception {
        List<Alert> readBack = new ArrayList<>();
        for (Alert a : first.alerts) {
            readBack.add(Json.mapper().readValue(Json.write(a), Alert.class));
        }
        Collections.reverse(readBack);
        CusumHistory history = new CusumHistory();
        for (WindowEstimate e : first.estimates) {
            assertTrue(history.add(PublishedEstimate.json(e, SmallCellPolicy.DEFAULT).getBytes(StandardCharsets.UTF_8)));
        }
        assertTrue(!history.of(first.estimates.get(0).stream()).isEmpty(),
                "final windows with CUSUM values published before the stop");
        Run second = new Run();
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

    /**
     * A window in which a chart signalled carries the alert's statistic (the highest value at a
     * signal) as its maximum, and that maximum is above the limit; a window without a signal has its
     * maximum at or below the limit.
     */
    private static void checkMaxAgainstSignals(Run run) {
        int signalled = 0;
        for (WindowEstimate e : run.estimates) {
            if (e.status() != WindowStatus.FINAL || e.cusum() == null) {
                continue;
            }
            for (CusumValue v : e.cusum()) {
                assertTrue(v.max() >= v.value(), "max at least the value at the window's end");
                Alert signal = run.alerts.stream().filter(a -> a.rule().equals(v.rule())
                        && a.windowEnd().equals(e.windowEnd()) && a.subject().term().equals(v.subject().term())
                        && a.state() != org.oddswatch.alerts.lifecycle.AlertState.CLEARED).findFirst().orElse(null);
                if (signal != null) {
                    assertNotNull(signal.observed());
                    assertEquals(signal.observed(), v.max(), 0.0, "the signal's statistic is the window's max");
                    assertTrue(v.max() > v.limit());
                    signalled++;
                } else {
                    // no signal: at or below h, or not yet past the guard's 100 events
                    assertTrue(v.max() <= v.limit() || v.events() == null || v.events() < 100,
                            "no signal: the chart stayed at or below h at " + e.windowEnd());
                }
            }
        }
        assertTrue(signalled >= 4, "windows with a signal: " + signalled);
    }
}
