package org.oddswatch.alerts.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.File;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.metrics.MeterScrape.Sample;

/**
 * {@code deploy/prometheus/oddswatch-rules.yml}: always parsed as YAML and checked to reference the
 * series the binder really exposes; where {@code promtool} is installed (Debian package
 * {@code prometheus}) also {@code promtool check rules}, and {@code promtool test rules} with an
 * input series copied from a real scrape of the alert-state gauge.
 */
class PrometheusRulesFileTest {

    private static final Path RULES = Path.of("..", "deploy", "prometheus", "oddswatch-rules.yml");

    @Test
    void parsesAsYamlAndFiresOnTheExposedAlertStateGauge() throws Exception {
        JsonNode root = new ObjectMapper(new YAMLFactory()).readTree(RULES.toFile());
        List<String> exprs = new ArrayList<>();
        for (JsonNode group : root.get("groups")) {
            assertTrue(group.hasNonNull("name"));
            for (JsonNode rule : group.get("rules")) {
                assertTrue(rule.hasNonNull("alert") && rule.hasNonNull("expr"), rule.toString());
                exprs.add(rule.get("expr").asText());
            }
        }
        List<Sample> scrape = MeterScrape.parse(MeterScrape.scrape());
        Sample state = scrape.stream().filter(s -> s.name().startsWith("oddswatch_alert_state")).findFirst().orElseThrow();
        assertTrue(exprs.stream().anyMatch(e -> e.contains(state.name() + ")") && e.contains("== 1")),
                "a rule fires on " + state.name());
        for (String series : List.of("oddswatch_webhook_failures_total", "oddswatch_records_total")) {
            assertTrue(scrape.stream().anyMatch(s -> s.name().equals(series)), series + " is exposed");
        }
    }

    /**
     * The reject-share rule, evaluated on real scrapes (promtool is not needed). Its expression has
     * the form {@code sum by (L) (rate(S{outcome="rejected"}[W])) > F * sum by (L) (rate(S[W]))};
     * both rates share the window W, so the comparison equals the one of the counters' increases
     * between two scrapes W apart (Prometheus' rate is increase / W). Source of that reading: the
     * Prometheus query-function documentation of {@code rate} and {@code increase}.
     */
    record RejectShareRule(String label, double factor, String series) {

        private static final java.util.regex.Pattern FORM = java.util.regex.Pattern.compile(
                "sum by \\((\\w+)\\) \\(rate\\((\\w+)\\{outcome=\"rejected\"}\\[(\\w+)]\\)\\)\\s*>\\s*"
                        + "([0-9.]+) \\* sum by \\((\\w+)\\) \\(rate\\((\\w+)\\[(\\w+)]\\)\\)");

        static RejectShareRule parse(String expr) {
            java.util.regex.Matcher m = FORM.matcher(expr.trim());
            assertTrue(m.matches(), "the reject-share rule keeps the form this check understands: " + expr);
            assertEquals(m.group(1), m.group(5), "both sides group by the same label");
            assertEquals(m.group(2), m.group(6), "both sides read the same series");
            assertEquals(m.group(3), m.group(7), "both sides take the same range");
            return new RejectShareRule(m.group(1), Double.parseDouble(m.group(4)), m.group(2));
        }

        /** The label values the rule fires for, given two scrapes. */
        java.util.Set<String> firing(List<Sample> before, List<Sample> after) {
            Map<String, double[]> byGroup = new java.util.TreeMap<>();
            for (Sample s : after) {
                if (!s.name().equals(series)) {
                    continue;
                }
                double earlier = before.stream().filter(b -> b.name().equals(series) && b.labels().equals(s.labels()))
                        .mapToDouble(b -> Double.parseDouble(b.value())).findFirst().orElse(0);
                double increase = Double.parseDouble(s.value()) - earlier;
                double[] sums = byGroup.computeIfAbsent(s.labels().getOrDefault(label, ""), k -> new double[2]);
                sums[1] += increase;
                if ("rejected".equals(s.labels().get("outcome"))) {
                    sums[0] += increase;
                }
            }
            java.util.Set<String> out = new java.util.TreeSet<>();
            byGroup.forEach((group, sums) -> {
                if (sums[0] > factor * sums[1]) {
                    out.add(group);
                }
            });
            return out;
        }
    }

    private static String rejectShareExpr() throws Exception {
        JsonNode root = new ObjectMapper(new YAMLFactory()).readTree(RULES.toFile());
        for (JsonNode group : root.get("groups")) {
            for (JsonNode rule : group.get("rules")) {
                if ("OddswatchRecordsRejected".equals(rule.path("alert").asText())) {
                    return rule.get("expr").asText();
                }
            }
        }
        throw new AssertionError("no OddswatchRecordsRejected rule");
    }

    @Test
    void rejectShareRuleFiresPerMonitorAndNotOnTheUnroutedSeries() throws Exception {
        RejectShareRule rule = RejectShareRule.parse(rejectShareExpr());
        io.micrometer.prometheusmetrics.PrometheusMeterRegistry registry =
                new io.micrometer.prometheusmetrics.PrometheusMeterRegistry(
                        io.micrometer.prometheusmetrics.PrometheusConfig.DEFAULT);
        RecordMeters meters = new RecordMeters();
        meters.bindTo(registry);
        meters.count("resp", "resp/north", "accepted", null);
        meters.count("resp", null, "rejected", "too-many-streams");
        List<Sample> before = MeterScrape.parse(registry.scrape());
        // 1,000 records of monitor resp: 980 accepted in two streams, 20 (2 %) rejected unrouted.
        for (int i = 0; i < 490; i++) {
            meters.accepted("resp", "resp/north");
            meters.accepted("resp", "resp/south");
        }
        for (int i = 0; i < 20; i++) {
            meters.count("resp", null, "rejected", i % 2 == 0 ? "too-many-streams" : "malformed-json");
        }
        meters.flush();
        List<Sample> twoPercent = MeterScrape.parse(registry.scrape());
        assertEquals(java.util.Set.of(), rule.firing(before, twoPercent), "2 % rejected: quiet");
        // The former rule (share per stream) fired on the unrouted series, where every record is a reject.
        RejectShareRule perStream = new RejectShareRule("stream", rule.factor(), rule.series());
        assertEquals(java.util.Set.of("none"), perStream.firing(before, twoPercent));

        for (int i = 0; i < 40; i++) {
            meters.count("resp", "resp/north", "rejected", "bad-time");
        }
        // 60 of 1,040 records (5.8 %) rejected: above 5 %, fires for the monitor.
        assertEquals(java.util.Set.of("resp"), rule.firing(before, MeterScrape.parse(registry.scrape())));
    }

    private static String promtool() {
        for (String dir : System.getenv().getOrDefault("PATH", "").split(File.pathSeparator)) {
            File f = new File(dir, "promtool");
            if (f.canExecute()) {
                return f.getPath();
            }
        }
        return null;
    }

    private static String run(List<String> command, Path dir) throws Exception {
        Process p = new ProcessBuilder(command).directory(dir.toFile()).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(120, TimeUnit.SECONDS), "promtool finished");
        assertEquals(0, p.exitValue(), String.join(" ", command) + " said:\n" + out);
        return out;
    }

    @Test
    void promtoolChecksTheRules() throws Exception {
        String promtool = promtool();
        Assumptions.assumeTrue(promtool != null, "promtool is not installed");
        String out = run(List.of(promtool, "check", "rules", RULES.toAbsolutePath().toString()), Path.of("."));
        assertTrue(out.contains("SUCCESS"), out);
    }

    @Test
    void promtoolUnitTestFiresOnAScrapedSeries(@TempDir Path dir) throws Exception {
        String promtool = promtool();
        Assumptions.assumeTrue(promtool != null, "promtool is not installed");
        Sample state = MeterScrape.parse(MeterScrape.scrape()).stream()
                .filter(s -> s.name().equals("oddswatch_alert_state")).findFirst().orElseThrow();
        String labels = state.labels().entrySet().stream().map(e -> e.getKey() + "=\"" + e.getValue() + "\"")
                .collect(Collectors.joining(","));
        String expLabels = state.labels().entrySet().stream().map(e -> "              " + e.getKey() + ": \""
                + e.getValue() + "\"").collect(Collectors.joining("\n"));
        Files.copy(RULES, dir.resolve("rules.yml"));
        Map<String, String> l = state.labels();
        String summary = "oddswatch " + l.get("rule") + " signal open on stream " + l.get("stream") + " ("
                + l.get("term") + " " + l.get("level") + ")";
        String description = "The oddswatch alert episode for rule " + l.get("rule") + ", subject " + l.get("term")
                + " (level " + l.get("level") + ") on stream " + l.get("stream") + " is open. Read the alert message"
                + " on the alerts topic or webhook for what moved, by how much, and the replay command. The signal"
                + " calls for investigation; it is not a diagnosis or proof of cause.";
        String test = """
                rule_files: [rules.yml]
                evaluation_interval: 1m
                tests:
                  - interval: 1m
                    input_series:
                      - series: 'oddswatch_alert_state{%s}'
                        values: '0 1 1 1 0'
                    alert_rule_test:
                      - eval_time: 0m
                        alertname: OddswatchSignalOpen
                        exp_alerts: []
                      - eval_time: 2m
                        alertname: OddswatchSignalOpen
                        exp_alerts:
                          - exp_labels:
                              severity: warning
                              team: surveillance
                %s
                            exp_annotations:
                              summary: "%s"
                              description: "%s"
                      - eval_time: 4m
                        alertname: OddswatchSignalOpen
                        exp_alerts: []
                """.formatted(labels, expLabels, summary, description);
        Files.writeString(dir.resolve("test.yml"), test);
        String out = run(List.of(promtool, "test", "rules", "test.yml"), dir);
        assertFalse(out.contains("FAILED"), out);
    }
}
