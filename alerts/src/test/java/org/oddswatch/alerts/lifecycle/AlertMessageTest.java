package org.oddswatch.alerts.lifecycle;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.json.Json;

class AlertMessageTest {

    private static Alert raise(ReplayHint hint) {
        AlertEngine e = new AlertEngine(Fixtures.STREAM, AlertRulesConfig.defaults(), Fixtures.baseline(), hint);
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
                "observed", "baseline", "limit", "evidence", "events", "message", "replayCommand"}) {
            assertTrue(n.has(field), field);
        }
        assertEquals("raised", n.get("state").asText());
        assertEquals("household_contact", n.get("subject").get("term").asText());
        assertEquals(1, n.get("evidence").get("consecutiveWindows").asInt());
        assertEquals(24, n.get("id").asText().length());
    }
}
