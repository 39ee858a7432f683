package org.oddswatch.alerts.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.metrics.MeterScrape.Sample;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The gauges under the small-cell rule: a window with 4 positives (limit 5) shows no prevalence,
 * odds ratio or calibration figure (NaN, not the previous window's value); with 5 positives they are
 * the estimate's own values; a window of 4 events shows no event count.
 */
class SmallCellMetersTest {

    private static WindowEstimate window(long events, long cases, CalibrationEstimate cal) {
        WindowEstimate w = Fixtures.window(0, Math.log(4.0), 0.15);
        return new WindowEstimate(w.stream(), w.windowStart(), w.windowEnd(), w.status(), events, cases,
                new PrevalenceEstimate((double) cases / events, 0.001, 0.01, "wilson", null), List.of(), w.fit(),
                w.coefficients(), cal, List.of());
    }

    private static double value(List<Sample> samples, String series, String term) {
        Sample s = samples.stream().filter(x -> x.name().equals(series)
                && (term == null || term.equals(x.labels().get("term")))).findFirst().orElseThrow();
        return Double.parseDouble(s.value());
    }

    @Test
    void withheldFiguresReadNaNAndShownOnesTheirValue() {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        FitMeters meters = new FitMeters();
        meters.bindTo(registry);
        CalibrationEstimate cal = Fixtures.calibration(1.1, 0.9, 1.3, 0.95, 0.1, 0.4);

        meters.finalEstimate(window(2010, 5, cal), SmallCellPolicy.DEFAULT);
        List<Sample> five = MeterScrape.parse(registry.scrape());
        assertEquals(5 / 2010.0, value(five, "oddswatch_prevalence", null), 1e-15);
        assertEquals(4.0, value(five, "oddswatch_odds_ratio", "household_contact"), 1e-12);
        assertEquals(2010.0, value(five, "oddswatch_window_events", null));
        assertEquals(1.1, value(five, "oddswatch_calibration_observed_expected", null), 1e-12);

        meters.finalEstimate(window(2010, 4, cal), SmallCellPolicy.DEFAULT);
        List<Sample> four = MeterScrape.parse(registry.scrape());
        for (String series : List.of("oddswatch_prevalence", "oddswatch_prevalence_lower", "oddswatch_prevalence_upper",
                "oddswatch_calibration_observed_expected", "oddswatch_calibration_slope")) {
            assertTrue(Double.isNaN(value(four, series, null)), series + " withheld");
        }
        assertTrue(Double.isNaN(value(four, "oddswatch_odds_ratio", "household_contact")));
        assertTrue(Double.isNaN(value(four, "oddswatch_odds_ratio_upper", "household_contact")));
        assertEquals(2010.0, value(four, "oddswatch_window_events", null), "the events stay");

        meters.finalEstimate(window(4, 1, null), SmallCellPolicy.DEFAULT);
        assertTrue(Double.isNaN(value(MeterScrape.parse(registry.scrape()), "oddswatch_window_events", null)));
        meters.finalEstimate(window(5, 0, null), SmallCellPolicy.DEFAULT);
        assertEquals(5.0, value(MeterScrape.parse(registry.scrape()), "oddswatch_window_events", null));
    }
}
