package org.oddswatch.alerts.metrics;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
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

/** A Prometheus registry fed with one stream's estimates, alerts, CUSUM, fits, events and webhook counts. */
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
        OddswatchMeters meters = new OddswatchMeters();
        meters.bindTo(registry);
        AlertEngine engine = new AlertEngine(Fixtures.STREAM, AlertRulesConfig.defaults(), Fixtures.baseline(), null);
        var w = Fixtures.window(0, Math.log(4.0), 0.15, Fixtures.fit(org.oddswatch.estimator.fit.FitState.CONVERGED,
                org.oddswatch.estimator.fit.FitMethod.NEWTON, 2000), Fixtures.calibration(1.1, 0.9, 1.3, 0.95, 0.1, 0.4));
        meters.onEstimate(w, org.oddswatch.alerts.privacy.SmallCellPolicy.DEFAULT);
        for (Alert a : engine.onFinalEstimate(w)) {
            meters.onAlert(a);
        }
        engine.onEvent(Fixtures.start(0).toEpochMilli(), "e1", new double[] {1, 1, 4.2}, true);
        meters.onCusum(Fixtures.STREAM, engine.cusumReadings());
        meters.recordFit(Fixtures.STREAM, Duration.ofMillis(12).toNanos(), 3);
        meters.countEvent("monitor", Fixtures.STREAM, "accepted", null);
        meters.countEvent("monitor", Fixtures.STREAM, "rejected", "bad-time");
        meters.webhookAttempt("success");
        meters.webhookFailure("queue-full");
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
