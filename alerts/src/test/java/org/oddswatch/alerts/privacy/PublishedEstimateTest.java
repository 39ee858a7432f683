package org.oddswatch.alerts.privacy;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The small-cell rule on the published estimate JSON: each kind of small cell at the boundary of
 * the default limit 5 (4 withheld, 5 shown, both sides checked so the test fails if the boundary
 * moves either way), the withheld list naming field and reason, no small count left anywhere in the
 * text, and larger cells published byte for byte as the unsuppressed JSON.
 */
class PublishedEstimateTest {

    private static final SmallCellPolicy FIVE = SmallCellPolicy.DEFAULT;

    /** The fixture window with other counts, strata and calibration (figures kept consistent enough). */
    static WindowEstimate estimate(long events, long cases, List<StratumPrevalence> strata, CalibrationEstimate cal) {
        WindowEstimate w = Fixtures.window(0, Math.log(2.0), 0.2);
        return new WindowEstimate(w.stream(), w.windowStart(), w.windowEnd(), w.status(), events, cases,
                new PrevalenceEstimate(events == 0 ? null : (double) cases / events, 0.01, 0.2, "wilson", null), strata,
                w.fit(), w.coefficients(), cal, List.of("only " + Math.min(cases, events - cases)
                        + " events of the rarer outcome"));
    }

    static WindowEstimate estimate(long events, long cases) {
        return estimate(events, cases, List.of(), null);
    }

    private static JsonNode published(WindowEstimate e, SmallCellPolicy policy) throws Exception {
        return Json.mapper().readTree(PublishedEstimate.json(e, policy));
    }

    /** field -> reason of the withheld list. */
    private static Map<String, String> withheld(JsonNode published) {
        Map<String, String> out = new LinkedHashMap<>();
        for (JsonNode item : published.path("withheld")) {
            out.put(item.get("field").asText(), item.get("reason").asText());
        }
        return out;
    }

    @Test
    void windowPositivesOfFourAreWithheldAndFiveAreShown() throws Exception {
        JsonNode four = published(estimate(2010, 4), FIVE);
        assertFalse(four.has("cases"), four.toString());
        assertFalse(four.has("prevalence"));
        assertFalse(four.has("coefficients"), "odds ratios rest on the positives");
        assertFalse(four.has("notes"), "a note may name the rarer outcome's count");
        assertFalse(four.get("fit").has("nullLogLikelihood"), "the intercept-only log-likelihood gives the positives");
        assertEquals(2010, four.get("events").asLong(), "the events stay");
        assertEquals("positives from 1 to 4", withheld(four).get("cases"));
        assertEquals(List.of("cases", "prevalence", "coefficients", "notes", "fit.logLikelihood", "fit.nullLogLikelihood"),
                new ArrayList<>(withheld(four).keySet()));

        WindowEstimate fiveCases = estimate(2010, 5);
        assertEquals(Json.write(fiveCases), PublishedEstimate.json(fiveCases, FIVE), "5 positives: published unchanged");
    }

    /** The chart values (statistics resting on the window's events) go with the window's counts. */
    @Test
    void chartValuesAreWithheldWithTheWindowsCounts() throws Exception {
        List<org.oddswatch.estimator.result.DriftValue> drift = List.of(new org.oddswatch.estimator.result.DriftValue(
                "odds-ratio-drift", new org.oddswatch.estimator.result.ChartSubject("household_contact", "yes"), 1.5));
        List<org.oddswatch.estimator.result.CusumValue> cusum = List.of(new org.oddswatch.estimator.result.CusumValue(
                "bernoulli-cusum-up", new org.oddswatch.estimator.result.ChartSubject("calibration", null), 2.5, 3.0,
                5.0, "between", 4000L, null));
        JsonNode four = published(estimate(2010, 4).withCharts(drift, cusum), FIVE);
        assertFalse(four.has("drift"), four.toString());
        assertFalse(four.has("cusum"));
        assertEquals("positives from 1 to 4", withheld(four).get("drift"));
        assertEquals("positives from 1 to 4", withheld(four).get("cusum"));
        WindowEstimate five = estimate(2010, 5).withCharts(drift, cusum);
        assertEquals(Json.write(five), PublishedEstimate.json(five, FIVE), "5 positives: published unchanged");
        JsonNode shown = published(five, FIVE);
        assertEquals(1.5, shown.get("drift").get(0).get("z").asDouble(), 0.0);
        assertEquals(3.0, shown.get("cusum").get(0).get("max").asDouble(), 0.0);
        assertFalse(shown.get("cusum").get(0).has("excursion"), "the chart stands at 2.5 with no run: none written");
    }

    @Test
    void windowNegativesOfFourAreWithheldAndFiveAreShown() throws Exception {
        JsonNode four = published(estimate(100, 96), FIVE);
        assertFalse(four.has("cases"));
        assertFalse(four.has("prevalence"));
        assertEquals("negatives from 1 to 4", withheld(four).get("cases"));
        WindowEstimate five = estimate(100, 95);
        assertEquals(Json.write(five), PublishedEstimate.json(five, FIVE));
    }

    @Test
    void windowEventsOfFourWithholdEverything() throws Exception {
        JsonNode four = published(estimate(4, 0), FIVE);
        for (String field : List.of("events", "cases", "prevalence", "coefficients", "notes")) {
            assertFalse(four.has(field), field);
        }
        assertFalse(four.get("fit").has("events"));
        assertEquals("events from 1 to 4", withheld(four).get("events"));
        assertTrue(four.has("windowStart") && four.has("windowEnd") && four.has("status"));
        WindowEstimate five = estimate(5, 0);
        assertEquals(Json.write(five), PublishedEstimate.json(five, FIVE), "5 events, 0 positives: shown");
    }

    @Test
    void zeroIsNotASmallCell() {
        WindowEstimate none = estimate(2010, 0);
        assertEquals(Json.write(none), PublishedEstimate.json(none, FIVE));
        WindowEstimate empty = estimate(0, 0);
        assertEquals(Json.write(empty), PublishedEstimate.json(empty, FIVE));
    }

    @Test
    void aSmallStratumIsWithheldWithTheSmallestOtherSoItCannotBeWorkedOut() throws Exception {
        List<StratumPrevalence> strata = List.of(
                new StratumPrevalence("region", "a", 50, 10, 0.2, 0.1, 0.3),
                new StratumPrevalence("region", "b", 40, 4, 0.1, 0.03, 0.2),
                new StratumPrevalence("region", "c", 60, 20, 1 / 3.0, 0.2, 0.4));
        JsonNode out = published(estimate(150, 34, strata, null), FIVE);
        assertEquals(34, out.get("cases").asLong(), "the window's own counts are large");
        JsonNode b = out.get("strata").get(1);
        assertEquals("b", b.get("level").asText());
        assertFalse(b.has("cases") || b.has("events") || b.has("value") || b.has("lower"), b.toString());
        assertEquals("stratum positives from 1 to 4", withheld(out).get("strata[1]"));
        // Otherwise b's positives follow as 34 - 10 - 20.
        assertFalse(out.get("strata").get(0).has("cases"));
        assertEquals(SmallCellPolicy.COMPLEMENTARY, withheld(out).get("strata[0]"));
        assertEquals(20, out.get("strata").get(2).get("cases").asLong());
        assertFalse(PublishedEstimate.json(estimate(150, 34, strata, null), FIVE).contains("\"cases\":4"));

        List<StratumPrevalence> five = List.of(strata.get(0), new StratumPrevalence("region", "b", 40, 5, 0.125, 0.05,
                0.25), strata.get(2));
        WindowEstimate shown = estimate(150, 35, five, null);
        assertEquals(Json.write(shown), PublishedEstimate.json(shown, FIVE));
    }

    @Test
    void strataOfAWindowWithWithheldPositivesAreAllWithheld() throws Exception {
        List<StratumPrevalence> strata = List.of(
                new StratumPrevalence("region", "a", 1000, 0, 0.0, 0.0, 0.01),
                new StratumPrevalence("region", "b", 1010, 3, 0.003, 0.001, 0.01));
        JsonNode out = published(estimate(2010, 3, strata, null), FIVE);
        for (JsonNode s : out.get("strata")) {
            assertFalse(s.has("cases") || s.has("events"), s.toString());
        }
    }

    @Test
    void calibrationWithFourObservedPositivesIsWithheld() throws Exception {
        CalibrationEstimate four = new CalibrationEstimate(2000, 4, 3.1, 4 / 3.1, 0.35, 3.3, 0.1, 0.5, 1.0, 0.4, 2.0,
                10, 0.98, 0.002, 0.6);
        JsonNode out = published(estimate(2010, 101, List.of(), four), FIVE);
        assertFalse(out.has("calibration"));
        assertEquals("calibration positives from 1 to 4", withheld(out).get("calibration"));
        CalibrationEstimate five = new CalibrationEstimate(2000, 5, 3.1, 5 / 3.1, 0.5, 3.8, 0.1, 0.5, 1.0, 0.4, 2.0,
                10, 0.98, 0.002, 0.6);
        WindowEstimate shown = estimate(2010, 101, List.of(), five);
        assertEquals(Json.write(shown), PublishedEstimate.json(shown, FIVE));
    }

    @Test
    void theLimitIsASetting() throws Exception {
        // Source: the US Centers for Medicare & Medicaid Services' cell size suppression policy
        // (no cell of 1 to 10 is published), i.e. a limit of 11.
        SmallCellPolicy eleven = new SmallCellPolicy(11);
        assertFalse(published(estimate(2010, 10), eleven).has("cases"));
        assertEquals("positives from 1 to 10", withheld(published(estimate(2010, 10), eleven)).get("cases"));
        WindowEstimate shown = estimate(2010, 11);
        assertEquals(Json.write(shown), PublishedEstimate.json(shown, eleven));
        assertNotEquals(Json.write(estimate(2010, 10)), PublishedEstimate.json(estimate(2010, 10), eleven));
        assertEquals("<11", eleven.withheldLabel());
        assertThrows(IllegalArgumentException.class, () -> new SmallCellPolicy(1), "the rule cannot be switched off");
    }

    @Test
    void theSameEstimateGivesTheSameText() {
        WindowEstimate e = estimate(2010, 3);
        assertEquals(PublishedEstimate.json(e, FIVE), PublishedEstimate.json(estimate(2010, 3), FIVE));
    }
}
