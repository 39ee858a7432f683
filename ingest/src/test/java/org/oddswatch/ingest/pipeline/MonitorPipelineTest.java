package org.oddswatch.ingest.pipeline;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

class MonitorPipelineTest {

    /** Daily buckets, two-day windows, six hours of allowed lateness, at most two regions. */
    /** Every rule switched off (a rule with defaults runs unless its section says enabled: false). */
    static final String NO_RULES =
            "    rules: {oddsRatioDrift: {enabled: false}, calibration: {enabled: false}, cusum: {enabled: false}}";

    static final String DEFINITION = String.join("\n",
            "monitors:",
            "  - name: resp",
            "    input: {topic: clinic-tests}",
            "    event:",
            "      id: /id",
            "      time: /collectedAt",
            "      maxFutureSkew: P1D",
            "      outcome: {field: /result, positive: [positive], negative: [negative]}",
            "    split: {field: /region, maxStreams: 2}",
            "    terms:",
            "      - {name: household_contact, field: /exposure/household, kind: binary, watched: true}",
            "      - {name: recent_travel, field: /exposure/travel, kind: binary}",
            "      - name: age_band",
            "        field: /ageBand",
            "        kind: categorical",
            "        levels: ['0-17', '18-39', '40-64', '65+']",
            "        reference: '18-39'",
            "        undeclared: missing",
            "    window: {width: P2D, step: P1D, lateness: PT6H}",
            "    estimates: {minEventsPerParameter: 1, profileIntervals: false}",
            NO_RULES,
            "");

    static final Instant D0 = Instant.parse("2026-02-02T00:00:00Z");

    private final CollectingListener out = new CollectingListener();
    private final MonitorPipeline pipeline = pipeline(DEFINITION, out);
    private long line;

    static MonitorPipeline pipeline(String definition, PipelineListener listener) {
        try {
            MonitorConfig config = DefinitionLoader.parse("test.yaml", definition, Map.of(), null);
            return new MonitorPipeline("clinic-tests", config.monitors(), listener, PipelineSettings.defaults());
        } catch (Exception e) {
            throw new AssertionError(e);
        }
    }

    private static Instant at(double days) {
        return D0.plusMillis((long) (days * 86_400_000L));
    }

    private RecordOutcome send(String id, double days, String region) {
        return send(HouseEvents.json(id, at(days), region, id.hashCode() % 2 == 0, false, "40-64", "female",
                id.hashCode() % 3 == 0));
    }

    private RecordOutcome send(String json) {
        return pipeline.offer(json.getBytes(StandardCharsets.UTF_8), RecordOrigin.line(++line), false);
    }

    private static String window(WindowEstimate e) {
        return e.windowStart() + "/" + e.windowEnd() + " " + e.status() + " " + e.events();
    }

    @Test
    void windowsCloseWhenTheWatermarkPassesEndPlusLateness() {
        for (int i = 0; i < 6; i++) {
            assertEquals(Outcome.ACCEPTED, send("a" + i, 0.1 + i * 0.1, "north").outcome());
        }
        for (int i = 0; i < 6; i++) {
            assertEquals(Outcome.ACCEPTED, send("b" + i, 1.1 + i * 0.1, "north").outcome());
        }
        // Watermark 1.6 days: the window ending at day 1 needs 1.25.
        assertEquals(1, out.estimates.size());
        assertEquals(at(-1) + "/" + at(1) + " final 6", window(out.estimates.get(0)));

        // An event of day 1 at 2.24 days is not yet late for the window ending at day 2 (final at 2.25).
        assertEquals(Outcome.ACCEPTED, send("c0", 2.24, "north").outcome());
        assertEquals(1, out.estimates.size());
        assertEquals(Outcome.ACCEPTED, send("c1", 1.9, "north").outcome());
        assertEquals(Outcome.ACCEPTED, send("c2", 2.25, "north").outcome());
        assertEquals(2, out.estimates.size());
        assertEquals(at(0) + "/" + at(2) + " final 13", window(out.estimates.get(1)));

        RecordOutcome late = send("c3", 1.95, "north");
        assertEquals(Outcome.LATE, late.outcome());
        assertEquals(RejectReason.LATE, late.reason());
        assertEquals(Outcome.ACCEPTED, send("c4", 2.01, "north").outcome());

        pipeline.closeAll();
        List<String> windows = new ArrayList<>();
        for (WindowEstimate e : out.estimates) {
            windows.add(window(e));
        }
        assertEquals(List.of(at(-1) + "/" + at(1) + " final 6", at(0) + "/" + at(2) + " final 13",
                at(1) + "/" + at(3) + " final 10", at(2) + "/" + at(4) + " final 3"), windows);
        for (WindowEstimate e : out.estimates) {
            assertEquals(WindowStatus.FINAL, e.status());
            assertEquals("resp/north", e.stream());
        }
        // Only late records go to rejects here.
        assertEquals(1, out.rejects.size());
        assertEquals(Outcome.LATE, out.rejects.get(0).outcome());
        assertEquals(16, out.rejects.get(0).origin().lineNumber());
    }

    @Test
    void duplicatesWhileTheirBucketIsHeld() {
        assertEquals(Outcome.ACCEPTED, send("x", 0.5, "north").outcome());
        RecordOutcome again = send("x", 0.5, "north");
        assertEquals(Outcome.DUPLICATE, again.outcome());
        assertEquals(RejectReason.DUPLICATE, again.reason());
        // The same id in another stream is a different event.
        assertEquals(RecordOutcome.ACCEPTED, send("x", 0.5, "south"));
        // Once the bucket's windows are final the same id is late, not duplicate.
        assertEquals(Outcome.ACCEPTED, send("y", 1.4, "north").outcome());
        assertEquals(Outcome.LATE, send("x", 0.5, "north").outcome());
        assertEquals(0, out.rejects.stream().filter(r -> r.reason().equals(RejectReason.DUPLICATE)).count());
    }

    @Test
    void anEventBeyondTheHorizonIsHeldAndAppliedOnceTheWatermarkCatchesUp() {
        assertEquals(Outcome.ACCEPTED, send("a", 1.0, "north").outcome());
        // More than maxFutureSkew (P1D) after the watermark: held, neither counted nor applied yet.
        assertTrue(send("b", 2.01, "north").held());
        assertEquals(at(1.0).toEpochMilli(), watermark(pipeline, "resp/north"));
        assertEquals(1, pipeline.snapshot().streams().get(0).heldFuture());
        assertEquals(1, pipeline.totals().consumed());
        // The stream's present comes within a day of it: applied, counted, and it moves the watermark.
        assertEquals(Outcome.ACCEPTED, send("c", 2.0, "north").outcome());
        assertEquals(at(2.01).toEpochMilli(), watermark(pipeline, "resp/north"));
        assertEquals(0, pipeline.snapshot().streams().get(0).heldFuture());
        assertEquals(3, pipeline.totals().outcome(Outcome.ACCEPTED));
        assertEquals(3, pipeline.snapshot().streams().get(0).counts().outcome(Outcome.ACCEPTED));
        assertTrue(out.rejects.isEmpty());
    }

    /**
     * A weekday-only feed: 20 events a weekday from 08:00 to 17:00, nothing on weekends, and a
     * three-week holiday. Every Monday (and the first day after the holiday) starts more than
     * maxFutureSkew after Friday's last event, so those events are held until five of them span an
     * hour, then applied: not one event is lost.
     */
    @Test
    void aWeekdayOnlyFeedWithWeekendsAndAHolidayLosesNothing() {
        int sent = 0;
        for (int week = 0; week < 10; week++) {
            if (week >= 4 && week < 7) {
                continue; // the holiday: three quiet weeks
            }
            for (int day = 0; day < 5; day++) {
                for (int i = 0; i < 20; i++) {
                    double days = week * 7 + day + (8 + i * 0.45) / 24.0; // D0 is a Monday
                    RecordOutcome outcome = send("w" + week + "d" + day + "e" + i, days, "north");
                    assertTrue(outcome.held() || outcome.accepted(), outcome.toString());
                    sent++;
                }
            }
        }
        pipeline.closeAll();
        var counts = pipeline.snapshot().streams().get(0).counts();
        assertEquals(sent, counts.outcome(Outcome.ACCEPTED), "every event of the feed is kept");
        assertEquals(sent, counts.consumed());
        assertEquals(sent, pipeline.totals().outcome(Outcome.ACCEPTED));
        assertTrue(out.rejects.isEmpty(), () -> out.rejects.get(0).detail());
        long inFinalWindows = 0;
        for (WindowEstimate e : out.estimates) {
            inFinalWindows += e.events();
        }
        assertEquals(2L * sent, inFinalWindows, "each event is in two windows of width P2D, step P1D");
    }

    /**
     * Three events dated 2099 a few seconds apart, then a thousand real events over three days:
     * the typos never move the watermark, every real event is accepted, and once the stream has
     * moved on a whole horizon without them the typos are rejected with the reason.
     */
    @Test
    void aHandfulOfFarFutureTyposNeverMoveTheWatermark() {
        for (int i = 0; i < 10; i++) {
            assertEquals(Outcome.ACCEPTED, send("a" + i, 0.1 + i * 0.05, "north").outcome());
        }
        long before = watermark(pipeline, "resp/north");
        for (int t = 0; t < 3; t++) {
            String typo = HouseEvents.json("typo" + t, Instant.parse("2099-02-03T10:00:00Z").plusSeconds(3L * t),
                    "north", true, false, "40-64", "female", false);
            assertTrue(send(typo).held());
        }
        assertEquals(before, watermark(pipeline, "resp/north"));
        int lateOrRejected = 0;
        for (int i = 0; i < 1000; i++) {
            RecordOutcome outcome = send("r" + i, 0.6 + i * 0.003, "north");
            if (!outcome.accepted()) {
                lateOrRejected++;
            }
        }
        assertEquals(0, lateOrRejected, "all 1,000 real events are accepted");
        assertEquals(at(0.6 + 999 * 0.003).toEpochMilli(), watermark(pipeline, "resp/north"));
        var counts = pipeline.snapshot().streams().get(0).counts();
        assertEquals(1010, counts.outcome(Outcome.ACCEPTED));
        assertEquals(3L, counts.reasons().get(RejectReason.TOO_FAR_IN_FUTURE));
        assertEquals(List.of("typo0", "typo1", "typo2"), out.rejects.stream().map(r -> idOf(r)).toList());
        assertTrue(out.rejects.get(0).detail().contains("without confirming it"), out.rejects.get(0).detail());
        assertEquals(line, pipeline.totals().consumed(), "every record counted once");
        assertEquals(0, pipeline.snapshot().streams().get(0).heldFuture());
    }

    @Test
    void heldEventsThatNothingConfirmedAreRejectedAtTheEndOfTheInput() {
        assertEquals(Outcome.ACCEPTED, send("a0", 1.0, "north").outcome());
        assertTrue(send("t0", 300, "north").held());
        assertTrue(send("t1", 300.0001, "north").held());
        pipeline.closeAll();
        assertEquals(2L, pipeline.totals().reasons().get(RejectReason.TOO_FAR_IN_FUTURE));
        assertEquals(List.of("t0", "t1"), out.rejects.stream().map(r -> idOf(r)).toList());
        assertTrue(out.rejects.get(1).detail().contains("by the end of the input"), out.rejects.get(1).detail());
        assertEquals(at(1.0).toEpochMilli(), watermark(pipeline, "resp/north"));
    }

    @Test
    void aFullHoldDropsItsOldestEvent() {
        MonitorPipeline small = pipeline(DEFINITION.replace("      maxFutureSkew: P1D",
                "      maxFutureSkew: P1D\n      futureConfirm: 3\n      futureHold: 3"), out);
        small.offer(HouseEvents.json("a0", at(1.0), "north", true, false, "40-64", "f", true)
                .getBytes(StandardCharsets.UTF_8), RecordOrigin.line(1), false);
        for (int t = 0; t < 4; t++) {
            // Days apart from each other: no chain, so nothing is confirmed.
            assertTrue(small.offer(HouseEvents.json("t" + t, at(100 + 10 * t), "north", true, false, "40-64", "f",
                    true).getBytes(StandardCharsets.UTF_8), RecordOrigin.line(2 + t), false).held());
        }
        assertEquals(List.of("t0"), out.rejects.stream().map(r -> idOf(r)).toList());
        assertTrue(out.rejects.get(0).detail().contains("the hold of 3 events is full"), out.rejects.get(0).detail());
        assertEquals(3, small.snapshot().streams().get(0).heldFuture());
    }

    private static String idOf(RejectedRecord r) {
        String text = new String(r.value(), StandardCharsets.UTF_8);
        int at = text.indexOf("\"id\":\"") + 6;
        return text.substring(at, text.indexOf('"', at));
    }

    @Test
    void splitValuesMakeStreamsUpToTheCap() {
        assertEquals(Outcome.ACCEPTED, send("a", 0.1, "north").outcome());
        assertEquals(Outcome.ACCEPTED, send("b", 0.2, "south").outcome());
        RecordOutcome third = send("c", 0.3, "east");
        assertEquals(Outcome.REJECTED, third.outcome());
        assertEquals(RejectReason.TOO_MANY_STREAMS, third.reason());
        assertEquals(Outcome.ACCEPTED, send("d", 0.4, "north").outcome());
        assertEquals(List.of("resp/north", "resp/south"), pipeline.streams());
        RejectedRecord reject = out.rejects.get(0);
        assertEquals("resp", reject.monitor());
        assertEquals("resp/east", reject.stream());
        assertEquals(3, reject.origin().lineNumber());

        PipelineSnapshot snapshot = pipeline.snapshot();
        assertEquals(2, snapshot.streams().size());
        assertEquals(2, snapshot.streams().get(0).counts().outcome(Outcome.ACCEPTED));
        assertEquals(1, snapshot.monitors().get(0).unrouted().reasons().get(RejectReason.TOO_MANY_STREAMS));

        pipeline.closeAll();
        assertEquals(List.of("resp/north", "resp/north", "resp/south", "resp/south"),
                out.estimates.stream().map(WindowEstimate::stream).toList());
    }

    @Test
    void everyRecordEndsInExactlyOneCountedOutcome() {
        List<String> records = new ArrayList<>(HouseEvents.generate(7, 600, D0, 5 * 86_400_000L, 12 * 3_600_000L,
                "north", "south", "east"));
        records.add(5, "{not json");
        records.add(50, "[1,2,3]");
        records.add(70, records.get(60));
        records.add(90, records.get(89).replace("\"negative\"", "\"unclear\"").replace("\"positive\"", "\"unclear\""));
        records.add(91, "{\"id\":\"z\",\"result\":\"positive\",\"region\":\"north\"}");
        for (String record : records) {
            send(record);
        }
        pipeline.closeAll();
        OutcomeCounts.Snapshot totals = pipeline.totals();
        assertEquals(records.size(), totals.consumed());
        long sum = 0;
        for (Outcome outcome : Outcome.values()) {
            sum += totals.outcome(outcome);
        }
        assertEquals(records.size(), sum);
        assertTrue(totals.outcome(Outcome.LATE) > 0, "the jitter makes some events late: " + totals);
        assertTrue(totals.outcome(Outcome.DUPLICATE) >= 1, totals.toString());
        assertEquals(1, totals.reasons().get(RejectReason.MALFORMED_JSON));
        assertEquals(1, totals.reasons().get(RejectReason.NOT_AN_OBJECT));
        assertEquals(1, totals.reasons().get(RejectReason.BAD_OUTCOME));
        assertEquals(1, totals.reasons().get(RejectReason.MISSING_FIELD));
        assertTrue(totals.reasons().get(RejectReason.TOO_MANY_STREAMS) > 100);
        // Per monitor: unrouted plus streams add up to the same records.
        PipelineSnapshot snapshot = pipeline.snapshot();
        long monitorTotal = snapshot.monitors().get(0).unrouted().consumed();
        for (StreamStatus stream : snapshot.streams()) {
            monitorTotal += stream.counts().consumed();
        }
        assertEquals(records.size(), monitorTotal);
        // Rejects = rejected + late records, each once.
        assertEquals(totals.outcome(Outcome.REJECTED) + totals.outcome(Outcome.LATE), out.rejects.size());
        // Each accepted event is in exactly the windows covering it: width/step = 2 windows.
        long inWindows = out.estimates.stream().mapToLong(WindowEstimate::events).sum();
        assertEquals(2 * totals.outcome(Outcome.ACCEPTED), inWindows);
    }

    /** Missing covariates (ingest/README.md) count toward prevalence and are left out of the fit. */
    @Test
    void missingCovariatesCountForPrevalenceButNotTheFit() {
        List<String> records = HouseEvents.generate(11, 400, D0, 86_400_000L, 0, "north");
        int missing = 0;
        for (String record : records) {
            if (!record.contains("ageBand")) {
                missing++;
            }
            send(record);
        }
        send(HouseEvents.json("u1", at(0.5), "north", true, false, "unknown-band", "male", true));
        missing++;
        pipeline.closeAll();
        assertTrue(missing > 5, "generator leaves out some age bands: " + missing);
        WindowEstimate first = out.estimates.get(0);
        assertEquals(401, first.events());
        assertEquals(401 - missing, first.fit().events());
        long cases = records.stream().filter(r -> r.contains("\"positive\"")).count() + 1;
        assertEquals(cases, first.cases());
        assertEquals((double) cases / 401, first.prevalence().value(), 1e-12);
    }

    @Test
    void interimEstimatesOfTheOpenWindow() {
        send("a", 0.2, "north");
        send("b", 0.4, "north");
        pipeline.emitInterim();
        assertEquals(1, out.estimates.size());
        WindowEstimate interim = out.estimates.get(0);
        assertEquals(WindowStatus.INTERIM, interim.status());
        assertEquals(at(1), interim.windowEnd());
        assertEquals(2, interim.events());
        pipeline.closeAll();
        assertEquals(3, out.estimates.size());
        assertEquals(WindowStatus.FINAL, out.estimates.get(1).status());
    }

    @Test
    void idleTimeoutMovesTheWatermark() {
        send("a", 0.2, "north");
        pipeline.advanceWatermark("resp/north", at(1.25).toEpochMilli());
        assertEquals(1, out.estimates.size());
        assertEquals(at(1), out.estimates.get(0).windowEnd());
        assertEquals(Outcome.LATE, send("b", 0.9, "north").outcome());
    }

    @Test
    void suppressedRecordsUpdateStateButEmitAndCountNothing() {
        CollectingListener quiet = new CollectingListener();
        MonitorPipeline rebuilt = pipeline(DEFINITION, quiet);
        List<String> records = HouseEvents.generate(3, 200, D0, 3 * 86_400_000L, 0, "north");
        for (int i = 0; i < records.size(); i++) {
            rebuilt.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), i < 150);
            send(records.get(i));
        }
        rebuilt.offer("{bad".getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, 0), true);
        assertEquals(151, rebuilt.snapshot().rebuilt());
        assertEquals(50, rebuilt.totals().consumed());
        assertTrue(quiet.rejects.isEmpty());
        rebuilt.closeAll();
        pipeline.closeAll();
        // The windows finalised after the rebuild equal those of an uninterrupted run.
        List<String> expected = new ArrayList<>();
        for (WindowEstimate e : out.estimates.subList(out.estimates.size() - quiet.estimates.size(),
                out.estimates.size())) {
            expected.add(org.oddswatch.alerts.json.Json.write(e));
        }
        List<String> actual = new ArrayList<>();
        for (WindowEstimate e : quiet.estimates) {
            actual.add(org.oddswatch.alerts.json.Json.write(e));
        }
        assertTrue(quiet.estimates.size() >= 2);
        assertEquals(expected, actual);
    }

    /**
     * A restart in the middle of an open CUSUM episode, as the service does it: the alerts published so
     * far are read back (here in reverse order, as from an alerts topic whose partitions hold different
     * episodes) and restored, the records from the fixed baseline's start to the stop are re-read as
     * state only, then the rest goes on live. The alerts equal those of an uninterrupted run byte for
     * byte.
     */
    @Test
    void restartDuringACusumEpisodeGivesTheUninterruptedAlerts() throws Exception {
        String withCusum = DEFINITION.replace(NO_RULES,
                "    baseline: {from: 2026-02-02T00:00:00Z, to: 2026-02-05T00:00:00Z}\n"
                        + "    rules: {oddsRatioDrift: {enabled: false}, calibration: {enabled: false}, cusum: {},"
                        + " guard: {minEvents: 100}}");
        // 14 days at 2,000 events a day; the household-contact log odds ratio rises by 0.8 after the
        // baseline period, so the upper chart signals within the first few hundred events and keeps on
        List<String> records = new ArrayList<>();
        for (HouseEvents.HouseEvent e : HouseEvents.events(33, 28_000, D0, 14 * 86_400_000L, 0, at(3), 0.8, "north")) {
            records.add(e.json());
        }
        CollectingListener uninterrupted = new CollectingListener();
        MonitorPipeline reference = pipeline(withCusum, uninterrupted);
        for (int i = 0; i < records.size(); i++) {
            reference.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
        }
        reference.closeAll();
        List<String> expected = uninterrupted.alerts.stream().map(Json::write).toList();
        assertTrue(uninterrupted.alerts.stream().filter(a -> a.rule().equals("bernoulli-cusum-up")).count() >= 8,
                "an episode long enough to stop in: " + expected.size());
        assertTrue(withCusum.contains("cusum: {},"), "the definition switches the CUSUM on");
        for (int stop : new int[] {9_000, 17_000}) {
            CollectingListener first = new CollectingListener();
            MonitorPipeline before = pipeline(withCusum, first);
            for (int i = 0; i < stop; i++) {
                before.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), false);
            }
            List<Alert> readBack = new ArrayList<>();
            for (Alert a : first.alerts) {
                readBack.add(Json.mapper().readValue(Json.write(a),
                        Alert.class));
            }
            Collections.reverse(readBack);
            CollectingListener second = new CollectingListener();
            MonitorPipeline after = pipeline(withCusum, second);
            after.restoreAlerts(readBack);
            for (int i = 0; i < records.size(); i++) {
                after.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka("t", 0, i), i < stop);
            }
            after.closeAll();
            List<String> combined = new ArrayList<>();
            first.alerts.forEach(a -> combined.add(Json.write(a)));
            second.alerts.forEach(a -> combined.add(Json.write(a)));
            assertEquals(expected, combined, "stopped after record " + stop);
        }
    }

    @Test
    void severalMonitorsOnOneInputCountEachRecordOnce() {
        String second = String.join("\n",
                "  - name: by-sex",
                "    input: {topic: clinic-tests}",
                "    event: {id: /id, time: /collectedAt, outcome: {field: /result}}",
                "    terms:",
                "      - {name: sex, field: /sex, kind: categorical, levels: [female, other], reference: female}",
                "    window: {width: P2D, step: P1D}",
                NO_RULES,
                "");
        CollectingListener both = new CollectingListener();
        MonitorPipeline two = pipeline(DEFINITION + second, both);
        RecordOutcome male = two.offer(HouseEvents.json("m1", at(0.1), "north", true, false, "40-64", "male", true)
                .getBytes(StandardCharsets.UTF_8), RecordOrigin.line(1), false);
        assertEquals(Outcome.ACCEPTED, male.outcome(), "the first monitor accepts it");
        RecordOutcome neither = two.offer("{\"id\":\"x\"}".getBytes(StandardCharsets.UTF_8), RecordOrigin.line(2),
                false);
        assertEquals(RejectReason.MISSING_FIELD, neither.reason());
        two.offer("{oops".getBytes(StandardCharsets.UTF_8), RecordOrigin.line(3), false);
        assertEquals(3, two.totals().consumed());
        assertEquals(1, two.totals().outcome(Outcome.ACCEPTED));
        PipelineSnapshot snapshot = two.snapshot();
        assertEquals(List.of("resp", "by-sex"), snapshot.monitors().stream().map(m -> m.monitor()).toList());
        // by-sex rejected the male record (unknown level) and the id-only record; both saw the broken one.
        assertEquals(3, snapshot.monitors().get(1).unrouted().consumed());
        assertEquals(1, snapshot.monitors().get(1).unrouted().reasons().get(RejectReason.UNKNOWN_LEVEL));
        assertEquals(2, snapshot.monitors().get(0).unrouted().consumed());
        // One reject per monitor that rejected, and one for the unreadable record.
        assertEquals(List.of("by-sex", "resp", "by-sex", "null"),
                both.rejects.stream().map(r -> String.valueOf(r.monitor())).toList());
    }

    /** Fixed-period baseline: accumulated over [from, to), frozen once no event of it can arrive. */
    @Test
    void fixedPeriodBaselineFreezesWhenThePeriodCanTakeNoMoreEvents() {
        String withBaseline = DEFINITION.replace(NO_RULES,
                "    baseline: {from: 2026-02-02T00:00:00Z, to: 2026-02-05T00:00:00Z}\n" + NO_RULES);
        CollectingListener listener = new CollectingListener();
        MonitorPipeline withPeriod = pipeline(withBaseline, listener);
        List<String> records = HouseEvents.generate(21, 2000, D0, 6 * 86_400_000L, 0, "north");
        int i = 0;
        int beforeFreeze = 0;
        for (; i < records.size(); i++) {
            beforeFreeze = listener.estimates.size();
            withPeriod.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.line(i + 1), false);
            if (withPeriod.snapshot().streams().get(0).baseline().equals("frozen")) {
                break;
            }
        }
        // Frozen by the first event at or after 2026-02-05T06:00Z (period end + lateness, day buckets).
        long frozenAt = Instant.parse(records.get(i).substring(records.get(i).indexOf("collectedAt") + 14,
                records.get(i).indexOf("collectedAt") + 14 + 24)).toEpochMilli();
        assertTrue(frozenAt >= at(3.25).toEpochMilli(), Instant.ofEpochMilli(frozenAt).toString());
        assertTrue(frozenAt < at(3.26).toEpochMilli(), Instant.ofEpochMilli(frozenAt).toString());
        assertTrue(beforeFreeze > 0);
        for (WindowEstimate e : listener.estimates.subList(0, beforeFreeze)) {
            assertNull(e.calibration(), "windows final before the freeze have no baseline");
        }
        for (i++; i < records.size(); i++) {
            withPeriod.offer(records.get(i).getBytes(StandardCharsets.UTF_8), RecordOrigin.line(i + 1), false);
        }
        withPeriod.closeAll();
        WindowEstimate last = listener.estimates.get(listener.estimates.size() - 1);
        assertTrue(last.calibration() != null, "windows after the freeze are compared with the baseline");

        // A period without positives cannot give a model: the stream says so and runs on without one.
        MonitorPipeline noPositives = pipeline(withBaseline, new CollectingListener());
        for (int j = 0; j < 300; j++) {
            noPositives.offer(HouseEvents.json("n" + j, at(j * 0.02), "north", j % 2 == 0, false, "40-64", "male", false)
                    .getBytes(StandardCharsets.UTF_8), RecordOrigin.line(j + 1), false);
        }
        StreamStatus status = noPositives.snapshot().streams().get(0);
        assertEquals("failed", status.baseline());
        assertTrue(status.baselineNote() != null && !status.baselineNote().isEmpty());
    }

    @Test
    void rejectsCarryTheOriginalBytesAndTheirText() {
        byte[] bytes = {'{', '"', 'i', (byte) 0xFF, '}'};
        pipeline.offer(bytes, RecordOrigin.kafka("clinic-tests", 3, 42), false);
        RejectedRecord reject = out.rejects.get(0);
        assertNull(reject.monitor());
        RejectedRecord.Json json = reject.toJson();
        assertEquals("clinic-tests", json.topic());
        assertEquals(3, json.partition());
        assertEquals(42L, json.offset());
        assertNull(json.line());
        assertNull(json.value(), "not valid UTF-8, so no text");
        assertArrayEquals(bytes, java.util.Base64.getDecoder().decode(json.valueBase64()));
        send("{\"id\":1}");
        assertEquals("{\"id\":1}", out.rejects.get(1).toJson().value());
        assertEquals(1L, out.rejects.get(1).toJson().line());
        assertEquals(Duration.ofDays(2).toMillis() + Duration.ofHours(6).toMillis(),
                DefinitionLoaderAccess.retention(DEFINITION));
    }

    /** Small bridge so the retention figure the Kafka rebuild uses is checked here too. */
    static final class DefinitionLoaderAccess {
        static long retention(String definition) {
            try {
                return DefinitionLoader.parse("t.yaml", definition, Map.of(), null).monitors().get(0).retentionMillis();
            } catch (Exception e) {
                throw new AssertionError(e);
            }
        }
    }

    /** A stream's watermark in epoch milliseconds as {@code /status} shows it. */
    private static long watermark(MonitorPipeline pipeline, String stream) {
        return pipeline.snapshot().streams().stream().filter(s -> s.stream().equals(stream)).findFirst()
                .orElseThrow().watermark().toEpochMilli();
    }
}
