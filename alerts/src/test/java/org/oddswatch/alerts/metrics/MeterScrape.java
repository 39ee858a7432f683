package org.oddswatch.alerts.metrics;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.net.URI;
import java.time.Duration;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.output.WebhookSink;

/** A Prometheus registry fed, through the binders, with one stream's estimates, alerts, CUSUM, fits, records and webhook counts, and an estimates file's failed lines. */
final class MeterScrape {

    /** One parsed sample line: series name, labels, value. */
    record Sample(String name, Map<String, String> labels, String value) {
    }

    private static final Pattern LINE = Pattern.compile("^([a-zA-Z_:][a-zA-Z0-9_:]*)(\\{(.*)\\})? (\\S+)( \\S+)?$");
    private static final Pattern LABEL = Pattern.compile("([a-zA-Z_][a-zA-Z0-9_]*)=\"((?:[^\"\\\\]|\\\\.)*)\"");

    private MeterScrape() {
    }

    /** Text of a scrape after a realistic sequence of updates. */
    static String scrape() {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        RecordMeters records = new RecordMeters();
        FitMeters fits = new FitMeters();
        AlertMeters alerts = new AlertMeters();
        WebhookSink webhook = new WebhookSink("monitor", URI.create("http://127.0.0.1:9/hook"), Duration.ofSeconds(1), 1);
        for (MeterBinder binder : List.of(records, fits, alerts, webhook)) {
            binder.bindTo(registry);
        }
        webhook.close();
        org.oddswatch.alerts.output.JsonLinesSink.appendingEstimates(java.nio.file.Path.of("estimates.jsonl"))
                .bindFailures(registry, "monitor");
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null);
        var w = Fixtures.window(0, Math.log(4.0), 0.15, Fixtures.fit(org.oddswatch.estimator.fit.FitState.CONVERGED,
                org.oddswatch.estimator.fit.FitMethod.NEWTON, 2000), Fixtures.calibration(1.1, 0.9, 1.3, 0.95, 0.1, 0.4));
        fits.finalEstimate(w, org.oddswatch.alerts.privacy.SmallCellPolicy.DEFAULT);
        for (Alert a : engine.onFinalEstimate(w)) {
            alerts.alert(a);
        }
        engine.onEvent(Fixtures.start(0).toEpochMilli(), "e1", new double[] {1, 1, 4.2}, true);
        alerts.cusum(Fixtures.STREAM, engine.cusumReadings());
        fits.fitted(Fixtures.STREAM, Duration.ofMillis(12).toNanos(), 3);
        records.accepted("monitor", Fixtures.STREAM);
        records.flush();
        records.count("monitor", Fixtures.STREAM, "rejected", "bad-time");
        return registry.scrape();
    }

    static List<Sample> parse(String text) {
        List<Sample> out = new ArrayList<>();
        for (String line : text.split("\n")) {
            if (line.isBlank() || line.startsWith("#")) {
                continue;
            }
            Matcher m = LINE.matcher(line);
            if (!m.matches()) {
                throw new IllegalArgumentException("not a Prometheus text line: " + line);
            }
            Map<String, String> labels = new LinkedHashMap<>();
            if (m.group(3) != null) {
                Matcher l = LABEL.matcher(m.group(3));
                while (l.find()) {
                    labels.put(l.group(1), l.group(2));
                }
            }
            out.add(new Sample(m.group(1), labels, m.group(4)));
        }
        return out;
    }
}
