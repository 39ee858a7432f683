package org.oddswatch.alerts.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.time.Duration;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.metrics.MeterScrape.Sample;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * {@code forgetStream} of the binders: every series of the stream leaves the scrape (gauges, alert
 * state, CUSUM, fit meters, record counters), the other stream's stay, and the stream's series come
 * back fresh when it is fed again.
 */
class StreamSeriesTest {

    private static final String OTHER = Fixtures.STREAM + "-other";

    private static Set<String> streamsIn(List<Sample> samples) {
        Set<String> out = new TreeSet<>();
        for (Sample s : samples) {
            if (s.name().startsWith("oddswatch_") && s.labels().containsKey("stream")) {
                out.add(s.labels().get("stream"));
            }
        }
        return out;
    }

    /** The three stream binders of one registry. */
    private record Binders(RecordMeters records, FitMeters fits, AlertMeters alerts) {
        static Binders boundTo(PrometheusMeterRegistry registry) {
            Binders b = new Binders(new RecordMeters(), new FitMeters(), new AlertMeters());
            b.records.bindTo(registry);
            b.fits.bindTo(registry);
            b.alerts.bindTo(registry);
            return b;
        }

        void forgetStream(String stream) {
            records.forgetStream(stream);
            fits.forgetStream(stream);
            alerts.forgetStream(stream);
        }
    }

    private static void feed(Binders meters, String stream) {
        WindowEstimate base = Fixtures.windowWithZ(0, 6.0);
        WindowEstimate w = new WindowEstimate(stream, base.windowStart(), base.windowEnd(), base.status(), base.events(),
                base.cases(), base.prevalence(), base.strata(), base.fit(), base.coefficients(), base.calibration(),
                base.notes());
        meters.fits().finalEstimate(w, SmallCellPolicy.DEFAULT);
        AlertEngine engine = new AlertEngine(stream, Fixtures.earlierDefaults(), Fixtures.baseline(), null);
        List<Alert> alerts = engine.onFinalEstimate(w);
        assertFalse(alerts.isEmpty(), "a drift alert for the alert-state gauge");
        alerts.forEach(meters.alerts()::alert);
        meters.alerts().cusum(stream, engine.cusumReadings());
        meters.fits().fitted(stream, Duration.ofMillis(3).toNanos(), 4);
        meters.records().accepted("resp", stream);
        meters.records().flush();
    }

    @Test
    void aForgottenStreamLeavesTheScrapeAndTheOthersStay() {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        Binders meters = Binders.boundTo(registry);
        feed(meters, Fixtures.STREAM);
        feed(meters, OTHER);
        List<Sample> both = MeterScrape.parse(registry.scrape());
        assertEquals(Set.of(Fixtures.STREAM, OTHER), streamsIn(both));
        long perStream = both.stream().filter(s -> OTHER.equals(s.labels().get("stream"))).count();
        assertTrue(perStream >= 10, "gauges, alert state and count, fit and record series: " + perStream);

        meters.forgetStream(Fixtures.STREAM);
        List<Sample> after = MeterScrape.parse(registry.scrape());
        assertEquals(Set.of(OTHER), streamsIn(after));
        assertEquals(perStream, after.stream().filter(s -> OTHER.equals(s.labels().get("stream"))).count());

        feed(meters, Fixtures.STREAM);
        List<Sample> again = MeterScrape.parse(registry.scrape());
        assertEquals(Set.of(Fixtures.STREAM, OTHER), streamsIn(again));
        Sample events = again.stream().filter(s -> s.name().equals("oddswatch_records_total")
                && Fixtures.STREAM.equals(s.labels().get("stream"))).findFirst().orElseThrow();
        assertEquals(1.0, Double.parseDouble(events.value()), "a returning stream counts from zero");
    }
}
