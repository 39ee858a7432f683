package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.URLEncoder;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * The live page's API on a service on the embedded broker, checked against {@code /status} and the
 * output topics: the streams, their status fields and the service's counts and partitions are those
 * of {@code /status}; each stream's estimates are the last final estimates of the estimates topic,
 * byte for byte as published (small cells withheld alike); the open and recent alerts are those of the
 * alerts topic.
 */
class ServiceLiveApiTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(90);
    private static final String[] REGIONS = {"north", "south", "east", "west", "central", "coast"};
    private final HttpClient client = HttpClient.newHttpClient();

    private JsonNode get(HttpEndpoints http, String path) throws Exception {
        HttpResponse<String> r = client.send(HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http.port() + path))
                .build(), HttpResponse.BodyHandlers.ofString());
        assertEquals(200, r.statusCode(), path + ": " + r.body());
        return ServiceTestSupport.tree(r.body());
    }

    private static HttpEndpoints start(MonitorService service, PrometheusMeterRegistry registry) throws Exception {
        return HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry, service::ready, service::status,
                service.site());
    }

    @Test
    void streamsAndEstimatesAreThoseOfStatusAndTheEstimatesTopic() throws Exception {
        String prefix = "liveapi";
        String input = prefix + "-tests";
        // About 31 events per 28-day window and stream: many windows have 1 to 4 positives (withheld).
        List<TestFeed.Event> events = TestFeed.events(47, 1000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(150), Duration.ZERO, REGIONS);
        KAFKA.createTopic(input, 2);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        ServiceTestSupport.produce(KAFKA, input, events, true, true);
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), input, prefix,
                prefix + "-group", 8, "P3650D"));
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        try (MonitorService service = new MonitorService(config, registry, prefix).start();
             HttpEndpoints http = start(service, registry)) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            ServiceTestSupport.awaitTrue("every record counted on /status", WAIT,
                    () -> service.status().counts().consumed() == events.size());
            JsonNode status = get(http, "/status");
            JsonNode api = get(http, "/api/streams");
            assertNull(service.failure());

            assertEquals(status.get("state"), api.at("/service/state"));
            assertEquals(status.get("counts"), api.at("/service/counts"));
            assertEquals(events.size(), api.at("/service/counts/outcomes/" + Outcome.ACCEPTED).asLong());
            assertEquals(status.get("partitions").size(), api.at("/service/partitions").size());
            for (int i = 0; i < status.get("partitions").size(); i++) {
                JsonNode p = status.get("partitions").get(i);
                JsonNode q = api.at("/service/partitions").get(i);
                for (String field : List.of("topic", "partition", "rebuilding", "committed")) {
                    assertEquals(p.get(field), q.get(field), field);
                }
                assertEquals(0, q.get("rebuilt").asLong(), "a first start re-reads nothing");
            }
            Map<String, JsonNode> fromStatus = new TreeMap<>();
            status.get("inputs").forEach(in -> in.get("streams").forEach(s -> fromStatus.put(s.get("stream").asText(), s)));
            List<String> listed = new ArrayList<>();
            api.get("streams").forEach(s -> listed.add(s.get("stream").asText()));
            assertEquals(List.copyOf(fromStatus.keySet()), listed, "the streams of /status, sorted");
            assertEquals(REGIONS.length, listed.size());

            // The estimates topic, per stream, in window order.
            Map<String, List<String>> topic = new TreeMap<>();
            ServiceTestSupport.finals(KAFKA, prefix + "-estimates").forEach((key, json) ->
                    topic.computeIfAbsent(key.substring(0, key.indexOf('|')), k -> new ArrayList<>()).add(json));
            int withheld = 0;
            for (JsonNode row : api.get("streams")) {
                String stream = row.get("stream").asText();
                JsonNode s = fromStatus.get(stream);
                for (String field : List.of("monitor", "watermark", "lastFinalWindowEnd", "finalWindows", "baseline", "counts")) {
                    assertEquals(s.get(field), row.get(field), stream + " " + field);
                }
                List<String> sent = topic.get(stream);
                sent.sort((a, b) -> ServiceTestSupport.tree(a).get("windowEnd").asText()
                        .compareTo(ServiceTestSupport.tree(b).get("windowEnd").asText()));
                assertEquals(s.get("finalWindows").asLong(), sent.size());
                assertEquals(ServiceTestSupport.tree(sent.get(sent.size() - 1)), row.get("final"), "newest final of " + stream);
                String path = "/api/streams/" + URLEncoder.encode(stream, StandardCharsets.UTF_8) + "/estimates?last="
                        + LiveHistory.WINDOWS;
                JsonNode estimates = get(http, path).get("estimates");
                List<JsonNode> expected = sent.subList(Math.max(0, sent.size() - LiveHistory.WINDOWS), sent.size())
                        .stream().map(ServiceTestSupport::tree).toList();
                List<JsonNode> actual = new ArrayList<>();
                estimates.forEach(actual::add);
                assertEquals(expected, actual, "the estimates topic's finals of " + stream);
                for (JsonNode e : actual) {
                    withheld += e.has("withheld") ? 1 : 0;
                }
                JsonNode three = get(http, path.replace("last=" + LiveHistory.WINDOWS, "last=3")).get("estimates");
                assertEquals(expected.subList(expected.size() - 3, expected.size()).get(0), three.get(0));
            }
            assertTrue(withheld > 0, "small cells withheld in the API as on the topic");
            assertFalse(get(http, "/api/streams").toString().contains("\"value\":\"{"), "no record value");
        }
    }

    @Test
    void openAndRecentAlertsAreThoseOfTheAlertsTopic() throws Exception {
        String prefix = "livealerts";
        for (String topic : List.of("-tests", "-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + topic, 1);
        }
        // One stream, fixed baseline of eight weeks; from April the household-contact odds ratio rises.
        List<TestFeed.Event> drifting = TestFeed.events(31, 5000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(175), Duration.ofHours(6), Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north");
        ServiceTestSupport.produce(KAFKA, prefix + "-tests", drifting, false, true);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        MonitorConfig config = TestDefinitions.config(TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix,
                prefix + "-tests", null));
        try (MonitorService service = new MonitorService(config, registry, prefix).start();
             HttpEndpoints http = start(service, registry)) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            List<JsonNode> sent = ServiceTestSupport.values(KAFKA, prefix + "-alerts");
            assertTrue(sent.stream().anyMatch(a -> a.get("state").asText().equals("raised")), "the drift raises an alert");
            JsonNode api = get(http, "/api/alerts?recent=" + LiveHistory.RECENT_ALERTS);
            List<JsonNode> newestFirst = new ArrayList<>(sent);
            java.util.Collections.reverse(newestFirst);
            List<JsonNode> recent = new ArrayList<>();
            api.get("recent").forEach(recent::add);
            assertEquals(newestFirst.subList(0, Math.min(newestFirst.size(), LiveHistory.RECENT_ALERTS)), recent,
                    "the alerts topic's messages, newest first");
            Map<String, JsonNode> open = new LinkedHashMap<>();
            for (JsonNode a : sent) {
                open.remove(a.get("id").asText());
                if (!a.get("state").asText().equals("cleared")) {
                    open.put(a.get("id").asText(), a);
                }
            }
            List<JsonNode> shown = new ArrayList<>();
            api.get("open").forEach(shown::add);
            assertEquals(List.copyOf(open.values()), shown, "episodes not cleared, with their newest message");
            JsonNode streams = get(http, "/api/streams");
            assertEquals(open.size(), streams.at("/streams/0/openAlerts").asInt());
            assertTrue(sent.get(0).has("replayCommand") && sent.get(0).has("message"));
        }
    }
}
