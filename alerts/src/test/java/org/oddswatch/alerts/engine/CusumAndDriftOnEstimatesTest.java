package org.oddswatch.alerts.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.time.Instant;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.rules.BernoulliCusumRule;
import org.oddswatch.alerts.rules.InformationGuard;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.DriftValue;
import org.oddswatch.estimator.result.WindowEstimate;

/** What charts need, carried by the final estimate: the drift z of each watched term and the CUSUM values. */
class CusumAndDriftOnEstimatesTest {

    private static final long WEEK = Fixtures.WEEK.toMillis();
    private static final long FIRST = Fixtures.FIRST_WINDOW.toEpochMilli();

    @Test
    void driftZIsTheRulesTwoSampleStatistic() {
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null,
                Fixtures.earlierDefaults().oddsRatioDrift(), null, null, null), Fixtures.baseline(), null);
        WindowEstimate window = Fixtures.window(0, 1.1, 0.12);
        List<Alert> alerts = engine.onFinalEstimate(window);
        WindowEstimate carried = engine.withCharts(window);
        assertEquals(1, carried.drift().size());
        DriftValue d = carried.drift().get(0);
        assertEquals("odds-ratio-drift", d.rule());
        assertEquals("household_contact", d.subject().term());
        assertEquals("yes", d.subject().level());
        // Source: Altman & Bland, "Interaction revisited: the difference between two estimates", BMJ
        // 2003;326:219 -- z = (b1 - b2) / sqrt(se1^2 + se2^2) for two independent estimates; baseline
        // 0.7 with se 0.08 (Fixtures.baseline), window 1.1 with se 0.12.
        assertEquals((1.1 - 0.7) / Math.sqrt(0.12 * 0.12 + 0.08 * 0.08), d.z(), 1e-12);
        assertNull(carried.cusum(), "no CUSUM rule, no cusum field");
        JsonNode json = Json.mapper().valueToTree(carried);
        assertTrue(json.has("drift") && !json.has("cusum"), json.toString());
        // a window beyond the limit: the alert's z is the carried one
        WindowEstimate beyond = Fixtures.windowWithZ(1, 4.0);
        Alert raised = engine.onFinalEstimate(beyond).get(0);
        assertEquals(raised.evidence().z(), engine.withCharts(beyond).drift().get(0).z(), 0.0);
        assertTrue(alerts.isEmpty());
    }

    @Test
    void withoutChartRulesTheEstimateIsUnchanged() {
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null,
                Fixtures.earlierDefaults().oddsRatioBounds(), null, null), Fixtures.baseline(), null);
        WindowEstimate window = Fixtures.window(0, 1.1, 0.12);
        engine.onFinalEstimate(window);
        assertSame(window, engine.withCharts(window));
        assertEquals(Json.write(Fixtures.window(0, 1.1, 0.12)), Json.write(engine.withCharts(window)));
    }

    @Test
    void cusumValuesAreTheChartsAtEachWindowEnd() {
        // an explicit h (the default limit is derived from the false-alarm budget)
        AlertRulesConfig.Cusum settings = AlertRulesConfig.withLimit(Fixtures.earlierDefaults().cusum(), 8.0);
        BaselineModel model = Fixtures.baseline();
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null, null, null, null, settings),
                model, null);
        InformationGuard guard = new InformationGuard(Fixtures.earlierDefaults().guardFor(settings.guard()));
        BernoulliCusumRule alone = new BernoulliCusumRule(settings, guard, model);
        long processed = 0;
        // the upper chart over all events, by hand: W = y ln R - ln(1 - p + R p), S = max(0, S + W)
        double r = settings.up();
        double s = 0;
        double highest = 0;
        for (int week = 0; week < 3; week++) {
            double weekStart = s;
            highest = s;
            for (int j = 0; j < 400; j++) {
                double[] row = {1, j % 3 == 0 ? 1 : 0, 2 + j % 5};
                boolean positive = j % (week == 1 ? 4 : 25) == 0;
                long t = FIRST + week * WEEK + j * 1000L;
                engine.onEvent(t, "e" + week + "-" + j, row, positive);
                alone.offer(t, "e" + week + "-" + j, row, positive);
                double p = model.risk(row);
                processed++;
                // Source: Steiner, Cook, Farewell & Treasure (2000), Biostatistics 1:441, eq. for the
                // risk-adjusted CUSUM weight W_t with odds ratio R_A under the alternative
                s = Math.max(0, s + (positive ? Math.log(r) : 0) - Math.log(1 - p + r * p));
                highest = Math.max(highest, s);
                if (s > settings.limit() && processed >= guard.minEvents()) {
                    s = 0;
                }
            }
            Instant end = Instant.ofEpochMilli(FIRST + (week + 1) * WEEK);
            WindowEstimate window = Fixtures.bareWindow(Instant.ofEpochMilli(FIRST + week * WEEK), end);
            engine.onFinalEstimate(window);
            alone.report(end);
            List<CusumValue> carried = engine.withCharts(window).cusum();
            assertEquals(alone.reportedValues(), carried, "the rule's own values, week " + week);
            CusumValue up = carried.get(0);
            assertEquals(BernoulliCusumRule.UP, up.rule());
            assertEquals("calibration", up.subject().term());
            assertEquals(s, up.value(), 1e-9, "week " + week);
            assertEquals(highest, up.max(), 1e-9, "week " + week + " from " + weekStart);
            assertEquals(settings.limit(), up.limit(), 0.0);
        }
    }
}
