package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.sun.net.httpserver.HttpServer;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.InputStream;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CopyOnWriteArrayList;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.http.HttpEndpoints;

/**
 * The live service's alert outputs on a real broker: a drifting stream raises an odds-ratio alert,
 * and then the alert meters are on {@code /metrics} (so the Prometheus rules can fire) and the
 * webhook has received every alert of the alerts topic.
 */
class ServiceAlertOutputsTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(90);

    /** One stream, fixed baseline of eight weeks; from April the household-contact odds ratio rises about 4.5 times. */
    private static final List<TestFeed.Event> DRIFTING = TestFeed.events(31, 5000, Instant.parse("2026-01-05T00:00:00Z"),
            Duration.ofDays(175), Duration.ofHours(6), Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north");

    private static String definition(String prefix, String webhookUrl) {
        return TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, prefix + "-tests", webhookUrl);
    }

    private static void createTopics(String prefix) {
        for (String topic : List.of("-tests", "-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + topic, 1);
        }
        ServiceTestSupport.produce(KAFKA, prefix + "-tests", DRIFTING, false, true);
    }

    private static List<JsonNode> alerts(String prefix) {
        return ServiceTestSupport.values(KAFKA, prefix + "-alerts");
    }

    @Test
    void aRaisedAlertAndTheLatestEstimatesAreOnTheMetricsPage() throws Exception {
        String prefix = "meters";
        createTopics(prefix);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        MonitorService service = new MonitorService(TestDefinitions.config(definition(prefix, null)), registry, prefix);
        HttpClient client = HttpClient.newHttpClient();
        try (service; HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry,
                service::ready, service::status)) {
            service.start();
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            List<JsonNode> alerts = alerts(prefix);
            assertFalse(alerts.isEmpty(), "the drift raises an alert");
            JsonNode first = alerts.get(0);
            assertEquals("raised", first.path("state").asText());
            JsonNode last = alerts.get(alerts.size() - 1);
            assertFalse("cleared".equals(last.path("state").asText()), "the drift stays up, the episode stays open");

            String body = client.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http.port() + "/metrics"))
                    .build(), HttpResponse.BodyHandlers.ofString()).body();
            // Prometheus text format sorts labels by name.
            String state = "oddswatch_alert_state{level=\"yes\",rule=\"" + first.path("rule").asText()
                    + "\",stream=\"resp\",term=\"household_contact\"} 1.0";
            assertTrue(body.contains(state), "alert-state gauge " + state + " in\n" + grep(body, "oddswatch_alert"));
            assertTrue(Pattern.compile("(?m)^oddswatch_prevalence\\{stream=\"resp\"} 0\\.\\d+").matcher(body).find(),
                    grep(body, "oddswatch_prevalence"));
            Matcher or = Pattern.compile("(?m)^oddswatch_odds_ratio\\{level=\"yes\",stream=\"resp\","
                    + "term=\"household_contact\"} ([0-9.E]+)").matcher(body);
            assertTrue(or.find(), grep(body, "oddswatch_odds_ratio"));
            // The generator's odds ratio after the drift is exp(1.0 + 1.5) = 12.2; the last window must be well above 3.
            assertTrue(Double.parseDouble(or.group(1)) > 3.0, or.group());
            assertTrue(body.contains("oddswatch_records_total{monitor=\"resp\",outcome=\"accepted\",reason=\"none\",stream=\"resp\"} "
                    + DRIFTING.size() + ".0"), grep(body, "oddswatch_records_total"));
            assertTrue(body.contains("oddswatch_fit_iterations_count{stream=\"resp\"}"), grep(body, "oddswatch_fit"));
        }

        // A restart with nothing new to read: the rebuild feeds no meters, but the open episode
        // restored from the alerts topic sets its alert-state gauge again.
        SimpleMeterRegistry restarted = new SimpleMeterRegistry();
        try (MonitorService again = new MonitorService(TestDefinitions.config(definition(prefix, null)), restarted,
                prefix + "-2").start()) {
            ServiceTestSupport.awaitTrue("restarted service ready", WAIT, again::ready);
            Gauge gauge = restarted.find("oddswatch.alert.state").tags("stream", "resp", "term", "household_contact",
                    "level", "yes").gauge();
            assertTrue(gauge != null, "alert-state gauge restored");
            assertEquals(1.0, gauge.value());
            assertTrue(restarted.find("oddswatch.prevalence").gauges().isEmpty(), "nothing fed while rebuilding");
            assertTrue(restarted.find("oddswatch.records").counters().isEmpty(), "rebuilt records are not counted");
        }
    }

    @Test
    void theWebhookReceivesEveryAlertOfTheAlertsTopic() throws Exception {
        String prefix = "hook";
        createTopics(prefix);
        List<String> received = new CopyOnWriteArrayList<>();
        HttpServer server = HttpServer.create(new InetSocketAddress("127.0.0.1", 0), 0);
        server.createContext("/hook", exchange -> {
            try (InputStream in = exchange.getRequestBody()) {
                received.add(new String(in.readAllBytes(), StandardCharsets.UTF_8));
            }
            exchange.sendResponseHeaders(204, -1);
            exchange.close();
        });
        server.start();
        try {
            String url = "http://127.0.0.1:" + server.getAddress().getPort() + "/hook";
            MonitorService service = new MonitorService(TestDefinitions.config(definition(prefix, url)),
                    new PrometheusMeterRegistry(PrometheusConfig.DEFAULT), prefix);
            try (service) {
                service.start();
                ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
                assertTrue(service.webhook("resp").awaitIdle(Duration.ofSeconds(30)), "webhook deliveries finish");
                assertEquals(0, service.webhook("resp").failures());
            }
            List<String> onTopic = new ArrayList<>();
            for (var record : KAFKA.readAll(prefix + "-alerts", Duration.ofSeconds(30))) {
                onTopic.add(new String(record.value(), StandardCharsets.UTF_8));
            }
            assertFalse(onTopic.isEmpty(), "the drift raises an alert");
            assertEquals(onTopic, received, "the webhook got the same alert JSON, in order");
        } finally {
            server.stop(0);
        }
    }

    private static String grep(String body, String prefix) {
        StringBuilder out = new StringBuilder();
        for (String line : body.split("\n")) {
            if (line.startsWith(prefix)) {
                out.append(line).append('\n');
            }
        }
        return out.toString();
    }
}
