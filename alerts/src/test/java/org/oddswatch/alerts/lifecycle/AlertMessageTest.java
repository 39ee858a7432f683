package org.oddswatch.alerts.lifecycle;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.json.Json;

class AlertMessageTest {

    private static Alert raise(ReplayHint hint) {
        AlertEngine e = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), hint);
        return e.onFinalEstimate(Fixtures.window(0, Math.log(4.0), 0.15)).get(0);
    }

    @Test
    void messageSaysWhatMovedByHowMuchWhereOnHowManyEventsAndHowToReproduce() {
        Alert a = raise(new ReplayHint("monitors/north region.yaml", "data/tests.jsonl", null));
        String m = a.message();
        assertTrue(m.startsWith("Raised (odds-ratio-drift, household_contact=yes) on stream respiratory-north"), m);
        assertTrue(m.contains("odds ratio of household_contact=yes (against no) is 4.000"), m);
        assertTrue(m.contains("up from 2.014 in the baseline"), m);
        assertTrue(m.contains("2026-04-06T00:00:00Z to 2026-04-13T00:00:00Z"), m);
        assertTrue(m.contains("on 2,000 events"), m);
        assertTrue(m.contains("the model fitted on 2026-01-05T00:00:00Z to 2026-03-30T00:00:00Z (24,000 events"), m);
        String cmd = "oddswatch replay --config 'monitors/north region.yaml' --input data/tests.jsonl"
                + " --from 2026-04-06T00:00:00Z --to 2026-04-13T00:00:00Z --out replay-" + a.id();
        assertEquals(cmd, a.replayCommand());
        assertTrue(m.contains(cmd), m);
        assertTrue(m.contains("calls for investigation"), m);
        assertTrue(m.contains("not a diagnosis or proof of cause"), m);
        assertTrue(m.contains("Local public-health rules, data-protection law and qualified epidemiologists decide"), m);
    }

    @Test
    void topicInputAndPlaceholders() {
        assertTrue(raise(new ReplayHint("n.yaml", null, "clinic-tests")).replayCommand()
                .startsWith("oddswatch replay --config n.yaml --topic clinic-tests --from "));
        assertTrue(raise(null).replayCommand()
                .startsWith("oddswatch replay --config <definition.yaml> --input <events-file> --from "));
    }

    @Test
    void jsonCarriesTheDesignFieldNames() throws Exception {
        JsonNode n = Json.mapper().readTree(Json.write(raise(null)));
        for (String field : new String[] {"id", "stream", "rule", "subject", "state", "windowStart", "windowEnd",
                "measure", "value", "direction", "observed", "baseline", "limit", "clearLimit", "evidence", "events",
                "message", "replayCommand"}) {
            assertTrue(n.has(field), field);
        }
        assertEquals("raised", n.get("state").asText());
        assertEquals("household_contact", n.get("subject").get("term").asText());
        assertEquals(1, n.get("evidence").get("consecutiveWindows").asInt());
        assertEquals(24, n.get("id").asText().length());
        assertEquals("odds-ratio-z", n.get("measure").asText());
        assertEquals("above", n.get("direction").asText());
        assertEquals(n.get("evidence").get("z").asDouble(), n.get("value").asDouble());
        assertEquals(2.0, n.get("clearLimit").asDouble());
    }

    private static WindowEstimate calibrated(int week, CalibrationEstimate c) {
        return Fixtures.window(week, 0.7, 0.15, Fixtures.fit(FitState.CONVERGED, FitMethod.NEWTON, 2000), c);
    }

    @Test
    void everyAlertNamesItsMeasureValueLimitAndDirectionInFieldsAndWords() {
        AlertEngine e = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null,
                Fixtures.earlierDefaults().calibration(), null), Fixtures.baseline(), null);
        // one calibration episode decided by three different figures in turn
        Alert hl = e.onFinalEstimate(calibrated(0, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 9.38e-6))).get(0);
        Alert oe = e.onFinalEstimate(calibrated(1, Fixtures.calibration(1.36, 1.28, 1.45, 1.0, 0.1, 0.5))).get(0);
        Alert slope = e.onFinalEstimate(calibrated(2, Fixtures.calibration(1.0, 0.9, 1.1, 1.516, 0.1, 0.5))).get(0);
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING, AlertState.CONTINUING),
                List.of(hl.state(), oe.state(), slope.state()));
        assertEquals("hosmer-lemeshow-p", hl.measure());
        assertEquals(9.38e-6, hl.value(), 1e-9);
        assertEquals(1e-4, hl.limit());
        assertEquals(1e-3, hl.clearLimit(), 1e-15);
        assertEquals(Measurement.Side.BELOW, hl.direction());
        assertTrue(hl.message().contains("Measured: the Hosmer-Lemeshow p-value (hosmer-lemeshow-p) = 9.38e-06, below"
                + " the limit 1.00e-04; clears after 2 windows in a row at or above 1.00e-03."), hl.message());
        assertEquals("observed-expected-ratio", oe.measure());
        assertEquals(1.36, oe.value());
        assertEquals(1.25, oe.limit());
        assertEquals(Measurement.Side.ABOVE, oe.direction());
        assertTrue(oe.message().contains("Measured: the ratio of observed to expected positives (observed-expected-ratio)"
                + " = 1.360, above the limit 1.250; clears after 2 windows in a row at or below 1.250."), oe.message());
        assertEquals("calibration-slope", slope.measure());
        assertEquals(1.516, slope.value());
        assertEquals(1.3, slope.limit());
        assertEquals(Measurement.Side.ABOVE, slope.direction());
        assertTrue(slope.message().contains("(calibration-slope) = 1.516, above the limit 1.300"), slope.message());
        for (Alert a : List.of(hl, oe, slope)) {
            assertTrue(a.message().contains(AlertText.CAUTION), a.message());
        }
        // back inside every band for two windows: cleared, within the clear limit
        e.onFinalEstimate(calibrated(3, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.5)));
        Alert cleared = e.onFinalEstimate(calibrated(4, Fixtures.calibration(1.0, 0.9, 1.1, 1.0, 0.1, 0.5))).get(0);
        assertEquals(AlertState.CLEARED, cleared.state());
        assertEquals(Measurement.Side.WITHIN, cleared.direction());
        assertEquals("observed-expected-ratio", cleared.measure());

        // a drift below the baseline: the z, its negative limit, the odds ratios in their own fields
        AlertEngine drift = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null);
        Alert down = drift.onFinalEstimate(Fixtures.windowWithZ(0, -3.5)).get(0);
        assertEquals("odds-ratio-z", down.measure());
        assertEquals(-3.5, down.value(), 1e-9);
        assertEquals(Measurement.Side.BELOW, down.direction());
        assertEquals(3.0, down.limit(), "the limit holds either way, as before");
        assertEquals(Math.exp(0.7), down.baseline(), 1e-12);
        assertTrue(down.message().contains("Measured: the drift z of the odds ratio against the baseline (odds-ratio-z)"
                + " = -3.50, at or below the limit -3.00; clears after 2 windows in a row inside ±2.00."), down.message());
    }
}
