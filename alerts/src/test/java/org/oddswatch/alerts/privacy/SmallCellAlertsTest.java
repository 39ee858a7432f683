package org.oddswatch.alerts.privacy;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Calibration;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioBounds;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioCusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermBounds;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * Alerts withhold what the estimate of their window withholds: each rule kind raised on a
 * constructed small window (and on the same window with large counts, its twin, which shows the
 * figures that must not appear), the published JSON and the message checked for every withheld
 * figure, and the incident quoting the alert.
 */
class SmallCellAlertsTest {

    private static final SmallCellPolicy CELLS = SmallCellPolicy.DEFAULT;
    private static final long DAY = Duration.ofDays(1).toMillis();

    /** The window with {@code events} events and {@code cases} positives, every figure as in {@code w}. */
    private static WindowEstimate counts(WindowEstimate w, long events, long cases) {
        return new WindowEstimate(w.stream(), w.windowStart(), w.windowEnd(), w.status(), events, cases,
                w.prevalence(), w.strata(), w.fit(), w.coefficients(), w.calibration(), w.notes());
    }

    private static Alert only(List<Alert> alerts) {
        assertEquals(1, alerts.size(), alerts.toString());
        assertEquals(AlertState.RAISED, alerts.get(0).state());
        return alerts.get(0);
    }

    /** The figures of the twin alert (large counts) the small one must not state. */
    private static List<Double> figures(Alert twin) {
        List<Double> out = new ArrayList<>();
        for (Double d : new Double[] {twin.value(), twin.observed(), twin.evidence().z(), twin.evidence().cusum(),
                twin.evidence().lower(), twin.evidence().upper()}) {
            if (d != null && d != 1.0) {
                out.add(d);
            }
        }
        assertFalse(out.isEmpty(), "the twin states figures");
        return out;
    }

    /** Every way the house formats a figure in a message. */
    private static List<String> texts(double d) {
        return List.of(Format.num(d), Format.stat(d), Format.stat(-d), String.format(Locale.ROOT, "%.4g", d),
                Measurement.format(Measurement.HOSMER_LEMESHOW_P, d));
    }

    /**
     * The small alert as published: no figure field, a {@code withheld} list naming each with the
     * reason, a message without any of the twin's figures that says they are withheld, the caution.
     */
    private static JsonNode assertWithheld(Alert small, Alert twin, String reason) throws Exception {
        JsonNode json = Json.mapper().readTree(PublishedAlert.json(small, CELLS));
        for (String field : List.of("value", "observed", "baseline")) {
            assertFalse(json.has(field), field + " in " + json);
        }
        for (String field : List.of("z", "cusum", "lower", "upper")) {
            assertFalse(json.get("evidence").has(field), "evidence." + field + " in " + json);
        }
        assertEquals(twin.evidence().consecutiveWindows(), small.evidence().consecutiveWindows(), "the run stays");
        List<String> listed = new ArrayList<>();
        json.get("withheld").forEach(w -> {
            listed.add(w.get("field").asText());
            if (!"events".equals(w.get("field").asText())) {
                assertEquals(reason, w.get("reason").asText(), json.toString());
            }
        });
        assertTrue(listed.contains("value"), json.toString());
        if (twin.observed() != null) {
            assertTrue(listed.contains("observed"), json.toString());
        }
        String message = json.get("message").asText();
        for (double d : figures(twin)) {
            for (String text : texts(d)) {
                assertFalse(message.contains(text), "'" + text + "' of " + d + " in: " + message);
            }
        }
        assertTrue(message.contains("withheld for small numbers (" + reason + ")"), message);
        assertTrue(message.endsWith(AlertText.CAUTION), message);
        assertEquals(twin.id(), small.id(), "the same episode");
        assertEquals(twin.limit(), small.limit(), "limits are settings, not figures of the window");
        return json;
    }

    /** The alert a fresh engine with the drift rule listed (the earlier defaults) raises on {@code window}. */
    private static Alert drift(WindowEstimate window) {
        return only(new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null)
                .onFinalEstimate(window));
    }

    @Test
    void oddsRatioDriftOnFewPositives() throws Exception {
        WindowEstimate large = Fixtures.windowWithZ(0, 4.0);
        Alert twin = drift(large);
        Alert small = drift(counts(large, 2010, 3));
        JsonNode json = assertWithheld(small, twin, "positives from 1 to 4");
        assertEquals(2000, json.get("events").asLong(), "the events (the fit's) stay, as in the estimate");
        assertTrue(small.message().contains("on 2,000 events"), small.message());
        // and few negatives: 2010 events, 2007 positives
        Alert negatives = drift(counts(large, 2010, 2007));
        assertWithheld(negatives, twin, "negatives from 1 to 4");
        // the boundary: 5 positives are shown in the estimate, and so are the alert's figures
        Alert five = drift(counts(large, 2010, 5));
        assertNull(five.withheld());
        assertEquals(twin.value(), five.value());
        assertEquals(Json.write(five), PublishedAlert.json(five, CELLS));
    }

    @Test
    void oddsRatioBoundsOnFewPositives() throws Exception {
        AlertRulesConfig rules = new AlertRulesConfig(null, null, new OddsRatioBounds(
                List.of(new TermBounds("household_contact", null, 4.0, 1.2)), null, null, null), null, null);
        WindowEstimate large = Fixtures.window(0, Math.log(6.0), 0.1);
        Alert twin = only(new AlertEngine(Fixtures.STREAM, rules, null, null).onFinalEstimate(large));
        Alert small = only(new AlertEngine(Fixtures.STREAM, rules, null, null).onFinalEstimate(counts(large, 2010, 4)));
        assertWithheld(small, twin, "positives from 1 to 4");
    }

    @Test
    void calibrationOnFewCalibrationPositives() throws Exception {
        AlertRulesConfig rules = new AlertRulesConfig(null, null, null,
                new Calibration(null, null, null, null, null, null, null), null);
        CalibrationEstimate c = Fixtures.calibration(1.6, 1.4, 1.8, 1.0, 0.05, 0.5);
        WindowEstimate large = Fixtures.window(0, 0.7, 0.1, Fixtures.fit(org.oddswatch.estimator.fit.FitState.CONVERGED,
                org.oddswatch.estimator.fit.FitMethod.NEWTON, 2000), c);
        // the window's own counts are large; only the calibration's positives are few (3 of 2000)
        CalibrationEstimate few = new CalibrationEstimate(c.events(), 3, c.expected(), c.observedExpected(), c.oeLower(),
                c.oeUpper(), c.intercept(), c.interceptSe(), c.slope(), c.slopeSe(), c.hosmerLemeshow(),
                c.hosmerLemeshowGroups(), c.hosmerLemeshowP(), c.brier(), c.cStatistic());
        WindowEstimate small = Fixtures.window(0, 0.7, 0.1, large.fit(), few);
        assertEquals("calibration positives from 1 to 4", CELLS.assess(small).calibration(), "the estimate withholds it");
        Alert twin = only(new AlertEngine(Fixtures.STREAM, rules, Fixtures.baseline(), null).onFinalEstimate(large));
        Alert alert = only(new AlertEngine(Fixtures.STREAM, rules, Fixtures.baseline(), null).onFinalEstimate(small));
        assertWithheld(alert, twin, "calibration positives from 1 to 4");
    }

    /** A Bernoulli CUSUM (R = 2, limit h) on {@code n} positive events on day 2, reported at the window ending on day 3. */
    private static Alert bernoulli(double h, int n, long windowEvents, long windowCases) {
        WindowGeometry byDay = new WindowGeometry(7 * DAY, DAY, 0, 0);
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(new Guard(null, null, 0L), null,
                null, null, new Cusum(2.0, null, h, null, null, null, null)), Fixtures.baseline(), null, byDay, CELLS);
        long t0 = Fixtures.start(0).toEpochMilli();
        for (int i = 0; i < n; i++) {
            engine.onEvent(t0 + 2 * DAY + 1000L * i, "e" + i, new double[] {1, 0, 0}, true);
        }
        WindowEstimate bare = Fixtures.bareWindow(Instant.ofEpochMilli(t0 - 4 * DAY), Instant.ofEpochMilli(t0 + 3 * DAY));
        return only(engine.onFinalEstimate(counts(bare, windowEvents, windowCases)));
    }

    /** The live page after a restart writes the alerts read back again: the text must be the one published. */
    @Test
    void anAlertReadBackIsWrittenAgainAsPublished() throws Exception {
        Alert fewEvents = bernoulli(2.0, 4, 0, 0);
        Alert fewPositives = bernoulli(2.6, 5, 2010, 3);
        Alert nothingWithheld = bernoulli(2.6, 5, 2010, 101);
        for (Alert alert : List.of(fewEvents, fewPositives, nothingWithheld)) {
            String published = PublishedAlert.json(alert, CELLS);
            Alert readBack = Json.mapper().readValue(published, Alert.class);
            assertEquals(published, PublishedAlert.json(readBack, CELLS), published);
        }
        assertEquals(0, Json.mapper().readValue(PublishedAlert.json(fewEvents, CELLS), Alert.class).events(),
                "read back without its small count");
    }

    @Test
    void bernoulliCusumOnAWindowWithFewPositives() throws Exception {
        // h = 2.6: the 5th positive crosses; the excursion's 5 events are shown, the window (3 positives) is not
        Alert twin = bernoulli(2.6, 5, 2010, 101);
        Alert small = bernoulli(2.6, 5, 2010, 3);
        JsonNode json = assertWithheld(small, twin, "positives from 1 to 4");
        assertEquals(5, json.get("events").asLong());
        assertNull(twin.withheld());
    }

    @Test
    void bernoulliCusumOnAFewEventExcursion() throws Exception {
        // h = 2: the 4th positive crosses; 4 events of the excursion are a small count themselves.
        // Source: Steiner, Cook, Farewell & Treasure (2000), W = y ln R - ln(1 - p + R p) per event:
        // 4 (ln 2 - ln(1 + p)) with p = 1/(1 + e^3)
        Alert small = bernoulli(2.0, 4, 0, 0);
        double p = 1 / (1 + Math.exp(3));
        double value = 4 * (Math.log(2) - Math.log(1 + p));
        JsonNode json = Json.mapper().readTree(PublishedAlert.json(small, CELLS));
        assertEquals("events", json.get("withheld").get(0).get("field").asText(), json.toString());
        assertFalse(json.has("events") || json.has("value") || json.get("evidence").has("cusum"), json.toString());
        assertEquals("events from 1 to 4", json.get("withheld").get(1).get("reason").asText());
        for (String text : texts(value)) {
            assertFalse(small.message().contains(text), text + " in " + small.message());
        }
        assertTrue(small.message().contains("on <5 events"), small.message());
    }

    /** A step CUSUM raised by 400 events of one week: half exposed, a half of them positive against 1 in 20 unexposed. */
    private static Alert step(long windowEvents, long windowCases) {
        AlertRulesConfig rules = new AlertRulesConfig(new Guard(null, null, 0L), null, null, null, null,
                new OddsRatioCusum(null, null, 3.0, null, null, null, null), null, null);
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, rules, Fixtures.baseline(), null, null, CELLS);
        long t0 = Fixtures.start(0).toEpochMilli();
        for (int i = 0; i < 400; i++) {
            boolean exposed = i % 2 == 0;
            engine.onEvent(t0 + 1000L * i, "s" + i, new double[] {1, exposed ? 1 : 0, 0}, exposed ? i % 4 == 0 : i % 40 == 1);
        }
        return only(engine.onFinalEstimate(counts(Fixtures.window(0, 0.7, 0.1), windowEvents, windowCases)));
    }

    @Test
    void oddsRatioStepCusumOnAWindowWithFewPositives() throws Exception {
        Alert twin = step(2010, 101);
        assertEquals("odds-ratio-cusum", twin.rule());
        assertWithheld(step(2010, 2), twin, "positives from 1 to 4");
    }

    @Test
    void aLargeWindowIsPublishedAsBefore() throws Exception {
        Alert alert = drift(Fixtures.windowWithZ(0, 4.0));
        assertNull(alert.withheld());
        String json = PublishedAlert.json(alert, CELLS);
        assertEquals(Json.write(alert), json);
        assertFalse(json.contains("withheld"), json);
        assertEquals(4.0, alert.value(), 1e-9);
        assertTrue(alert.message().contains("Measured: the drift z of the odds ratio against the baseline (odds-ratio-z) = 4.00"),
                alert.message());
    }

    @Test
    void anIncidentQuotesTheWithheldAlertWithoutItsFigures() throws Exception {
        WindowEstimate large = Fixtures.windowWithZ(0, 4.0);
        Alert twin = drift(large);
        Alert small = drift(counts(large, 2010, 3));
        Incident shown = IncidentTracker.sameStream().accept(twin).orElseThrow();
        assertTrue(shown.message().contains("odds-ratio-z 4.000 above 3.000"), shown.message());
        Incident incident = IncidentTracker.sameStream().accept(small).orElseThrow();
        JsonNode json = Json.mapper().readTree(Json.write(incident));
        JsonNode evidence = json.get("evidence").get(0);
        assertFalse(evidence.has("value"), evidence.toString());
        assertEquals("value", evidence.get("withheld").get(0).get("field").asText());
        assertEquals("positives from 1 to 4", evidence.get("withheld").get(0).get("reason").asText());
        assertTrue(incident.message().contains("odds-ratio-z withheld for small numbers (positives from 1 to 4)"),
                incident.message());
        for (double d : figures(twin)) {
            for (String text : texts(d)) {
                assertFalse(incident.message().contains(text), text + " in " + incident.message());
            }
        }
        assertTrue(incident.message().endsWith(AlertText.CAUTION), incident.message());
        assertNotNull(Json.mapper().readValue(PublishedAlert.json(small, CELLS), Alert.class).withheld(),
                "read back (a restart), the withheld list comes with it");
    }
}
