package org.oddswatch.alerts.output;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;

/** The log gets incident messages, one line each with the JSON as published, and no alert message. */
class LogSinkTest {

    @Test
    void logsEachIncidentMessageOnceAndNoAlertMessage() {
        List<Alert> alerts = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null)
                .onFinalEstimate(Fixtures.windowWithZ(0, 4));
        Alert raised = alerts.get(0);
        Incident opened = IncidentTracker.sameStream().accept(raised).orElseThrow();
        String incidentJson = Json.write(opened);
        PrintStream err = System.err;
        ByteArrayOutputStream captured = new ByteArrayOutputStream();
        // slf4j-simple writes to System.err as it is at the time of each message
        System.setErr(new PrintStream(captured, true, StandardCharsets.UTF_8));
        try {
            LogSink sink = new LogSink();
            sink.alert(raised, new Published("resp", raised.id(), PublishedAlert.json(raised, SmallCellPolicy.DEFAULT)));
            sink.incident(opened, new Published("resp", opened.id(), incidentJson));
        } finally {
            System.setErr(err);
        }
        String log = captured.toString(StandardCharsets.UTF_8);
        assertEquals(1, log.split("incident " + opened.id() + " opened", -1).length - 1, log);
        assertTrue(log.contains(incidentJson), log);
        assertEquals(-1, log.indexOf("alert " + raised.id()), "no line per alert message: " + log);
        assertTrue(log.contains("WARN"), log);
    }
}
