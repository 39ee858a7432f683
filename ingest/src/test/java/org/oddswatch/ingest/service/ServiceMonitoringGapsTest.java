package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.pipeline.GapScenario;

/**
 * What a stream of the live service does not monitor shows on {@code /status} (with the reason in
 * words) and as the {@code oddswatch.monitoring.gaps} gauge (with the reason code as a tag): a
 * failed baseline, the rules it stops, a rule switched off, windows a rule could not judge, and a
 * term missing from every event.
 */
class ServiceMonitoringGapsTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(60);

    @Test
    void gapsShowOnStatusAndAsAGauge() throws Exception {
        String prefix = "gaps";
        for (String t : List.of("-tests", "-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + t, 1);
        }
        String yaml = """
                kafka:
                  bootstrap.servers: %s
                service:
                  groupId: %s-group
                  refresh: PT1H
                  idleTimeout: P3650D
                """.formatted(KAFKA.bootstrapServers(), prefix)
                + GapScenario.definition(prefix + "-tests")
                + "    outputs: {estimatesTopic: %s-estimates, rejectsTopic: %s-rejects, alertsTopic: %s-alerts}\n"
                        .formatted(prefix, prefix, prefix);
        List<byte[]> values = new ArrayList<>();
        for (String line : GapScenario.jsonLines()) {
            values.add(line.getBytes(StandardCharsets.UTF_8));
        }
        KAFKA.produce(prefix + "-tests", null, values);

        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        MonitorService service = new MonitorService(TestDefinitions.config(yaml), registry, "gaps");
        HttpClient client = HttpClient.newHttpClient();
        try (service; HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry,
                service::ready, service::status)) {
            String base = "http://127.0.0.1:" + http.port();
            service.start();
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            ServiceTestSupport.awaitTrue("/status to count every record", WAIT, () -> ServiceTestSupport.tree(
                    get(client, base + "/status")).path("counts").path("consumed").asLong() == values.size());

            JsonNode stream = ServiceTestSupport.tree(get(client, base + "/status")).path("inputs").get(0)
                    .path("streams").get(0);
            assertEquals(GapScenario.STREAM, stream.path("stream").asText());
            assertEquals("failed", stream.path("baseline").asText());
            List<String> keys = new ArrayList<>();
            for (JsonNode gap : stream.path("gaps")) {
                keys.add(gap.path("scope").asText() + "|" + (gap.has("subject") ? gap.path("subject").asText() : "null")
                        + "|" + gap.path("reason").asText());
            }
            assertEquals(GapScenario.EXPECTED, keys, stream.toString());
            JsonNode baseline = stream.path("gaps").get(0);
            assertTrue(baseline.path("detail").asText().startsWith("cannot fit a baseline model"), baseline.toString());
            assertEquals(stream.path("baselineNote").asText(), baseline.path("detail").asText());
            assertTrue(stream.path("gaps").get(6).path("detail").asText().contains("accepted event(s) has a value"),
                    stream.toString());
            long windows = stream.path("gaps").get(4).path("windows").asLong();
            long inPeriod = stream.path("gaps").get(5).path("windows").asLong();
            assertEquals(stream.path("finalWindows").asLong(), windows + inPeriod, "no rule judged any final window");
            // 28-day windows every 7 days from 2026-01-05: those ending 2026-01-12 to 02-23 overlap the period
            assertEquals(7, inPeriod);
            assertTrue(windows >= 2, "ten weeks of events close windows after the period too: " + windows);

            String metrics = get(client, base + "/metrics");
            for (String series : List.of(
                    "scope=\"baseline\",stream=\"clinic\",subject=\"none\"} 1.0",
                    "scope=\"rule\",stream=\"clinic\",subject=\"bernoulli-cusum\"} 1.0",
                    "scope=\"term\",stream=\"clinic\",subject=\"smoker\"} 1.0",
                    "scope=\"windows\",stream=\"clinic\",subject=\"odds-ratio-bounds\"} " + (double) windows,
                    "scope=\"windows\",stream=\"clinic\",subject=\"none\"} 7.0")) {
                assertTrue(metrics.contains(series), series + " in\n" + gapLines(metrics));
            }
            for (String reason : List.of("baseline-failed", "switched-off", "term-missing", "no-fit")) {
                assertTrue(Pattern.compile("oddswatch_monitoring_gaps\\{monitor=\"clinic\",reason=\"" + reason + "\"")
                        .matcher(metrics).find(), reason + " in\n" + gapLines(metrics));
            }
            Matcher series = Pattern.compile("(?m)^oddswatch_monitoring_gaps\\{").matcher(metrics);
            int count = 0;
            while (series.find()) {
                count++;
            }
            assertEquals(GapScenario.EXPECTED.size(), count, gapLines(metrics));
            shippedRuleSelectsTheUnchosenGaps(metrics);
        }
    }

    private static String gapLines(String metrics) {
        return String.join("\n", metrics.lines().filter(l -> l.contains("monitoring_gaps")).toList());
    }

    private static String get(HttpClient client, String url) {
        try {
            HttpResponse<String> response = client.send(HttpRequest.newBuilder(URI.create(url)).build(),
                    HttpResponse.BodyHandlers.ofString());
            assertEquals(200, response.statusCode(), url);
            return response.body();
        } catch (java.io.IOException e) {
            throw new java.io.UncheckedIOException(e);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        }
    }

    /**
     * The shipped Prometheus rule {@code OddswatchStreamNotMonitored} selects, on this real scrape,
     * the failed baseline and the missing term (gaps nobody chose) and not the rule switched off on
     * purpose or the windows inside the baseline period. Its label matcher {@code reason=~"..."} is
     * a fully anchored RE2 alternation (Prometheus query documentation, "Time series selectors"),
     * which java.util.regex reads the same way for these literals.
     */
    private static void shippedRuleSelectsTheUnchosenGaps(String metrics) throws Exception {
        JsonNode rules = new ObjectMapper(new YAMLFactory()).readTree(
                Path.of("..", "deploy", "prometheus", "oddswatch-rules.yml").toFile());
        String expr = null;
        for (JsonNode group : rules.get("groups")) {
            for (JsonNode rule : group.get("rules")) {
                if ("OddswatchStreamNotMonitored".equals(rule.path("alert").asText())) {
                    expr = rule.get("expr").asText();
                }
            }
        }
        assertNotNull(expr, "the rules file has OddswatchStreamNotMonitored");
        Matcher selector = Pattern.compile("oddswatch_monitoring_gaps\\{reason=~\"([^\"]+)\"\\}").matcher(expr);
        assertTrue(selector.find(), expr);
        Pattern reasons = Pattern.compile(selector.group(1));
        Set<String> selected = new TreeSet<>();
        Matcher line = Pattern.compile("(?m)^oddswatch_monitoring_gaps\\{.*reason=\"([^\"]+)\".*\\} (\\S+)$")
                .matcher(metrics);
        while (line.find()) {
            if (reasons.matcher(line.group(1)).matches() && Double.parseDouble(line.group(2)) > 0) {
                selected.add(line.group(1));
            }
        }
        assertEquals(Set.of("baseline-failed", "term-missing"), selected, gapLines(metrics));
    }
}
