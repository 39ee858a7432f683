package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * The live page after a restart, before any new record: the restarted service publishes nothing
 * again, yet its API lists the alert episode and the incident open at the stop, each with the JSON
 * text published before (the alerts topic's newest message of the episode; the first run's incident
 * message), and the stream's final estimates as the estimates topic holds them, byte for byte.
 */
class LivePageRestoredTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    private static final Instant STOP = Instant.parse("2026-05-04T00:00:00Z");

    @Test
    void openEpisodesIncidentsAndFinalsAreShownAgainAfterARestart() throws Exception {
        String prefix = "restoredpage";
        String input = prefix + "-tests";
        KAFKA.createTopic(input, 1);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        // the household-contact odds ratio rises e^1.5-fold from 2026-04-06: a drift episode and its incident open
        List<TestFeed.Event> events = TestFeed.events(43, 8500, START, Duration.between(START, STOP), Duration.ZERO,
                Instant.parse("2026-04-06T00:00:00Z"), 1.5, "north");
        MonitorConfig config = TestDefinitions.config(TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, input,
                null));
        ServiceTestSupport.produce(KAFKA, input, events, true, true);

        List<String> openAlertsBefore;
        List<String> openIncidentsBefore;
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-1").start()) {
            ServiceTestSupport.awaitTrue("an open incident after the rise", Duration.ofSeconds(90),
                    () -> !texts(alerts(service).at("/incidents/open")).isEmpty());
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, Duration.ofSeconds(60));
            openAlertsBefore = texts(alerts(service).get("open"));
            openIncidentsBefore = texts(alerts(service).at("/incidents/open"));
        }
        List<String> alertMessages = raw(prefix + "-alerts");
        Map<String, String> openOnTopic = new LinkedHashMap<>();
        for (String a : alertMessages) {
            JsonNode alert = ServiceTestSupport.tree(a);
            openOnTopic.remove(alert.get("id").asText());
            if (!alert.get("state").asText().equals("cleared")) {
                openOnTopic.put(alert.get("id").asText(), a);
            }
        }
        assertFalse(openOnTopic.isEmpty(), "an episode open at the stop");
        assertEquals(sorted(openOnTopic.values()), sorted(openAlertsBefore), "the first run showed the topic's open episodes");
        assertEquals(1, openIncidentsBefore.size(), "one incident open at the stop");
        List<String> finals = new ArrayList<>(ServiceTestSupport.finals(KAFKA, prefix + "-estimates").values());
        finals.sort((a, b) -> Instant.parse(ServiceTestSupport.tree(a).get("windowEnd").asText())
                .compareTo(Instant.parse(ServiceTestSupport.tree(b).get("windowEnd").asText())));
        assertTrue(finals.size() > 10, "final windows before the stop: " + finals.size());
        long estimatesBefore = KAFKA.readAll(prefix + "-estimates", Duration.ofSeconds(30)).size();

        // no new record: the restarted service rebuilds its state and publishes nothing
        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-2").start()) {
            ServiceTestSupport.awaitTrue("the restarted service ready", Duration.ofSeconds(90), service::ready);
            assertNull(service.failure());
            JsonNode alerts = alerts(service);
            assertEquals(sorted(openOnTopic.values()), sorted(texts(alerts.get("open"))),
                    "the open episodes, as published on the alerts topic");
            assertEquals(openIncidentsBefore, texts(alerts.at("/incidents/open")), "the open incident, as sent before");
            assertEquals(List.of(), texts(alerts.get("recent")), "no alert message published again");
            assertEquals(List.of(), texts(alerts.at("/incidents/recent")), "no incident message sent again");

            JsonNode streams = ServiceTestSupport.tree(service.site().answer("/api/streams", null).body());
            JsonNode row = streams.at("/streams/0");
            assertEquals("resp", row.get("stream").asText());
            assertEquals(finals.get(finals.size() - 1), Json.write(row.get("final")), "the newest final estimate");
            assertEquals(openOnTopic.size(), row.get("openAlerts").asInt());
            JsonNode kept = ServiceTestSupport.tree(service.site()
                    .answer("/api/streams/resp/estimates", "last=" + LiveHistory.WINDOWS).body());
            assertEquals(finals.subList(Math.max(0, finals.size() - LiveHistory.WINDOWS), finals.size()),
                    texts(kept.get("estimates")), "the final estimates of the estimates topic, oldest first");

            assertEquals(alertMessages, raw(prefix + "-alerts"), "no alert published again");
            assertEquals(estimatesBefore, KAFKA.readAll(prefix + "-estimates", Duration.ofSeconds(30)).size(),
                    "no estimate published again");
        }
    }

    private static JsonNode alerts(MonitorService service) {
        return ServiceTestSupport.tree(service.site().answer("/api/alerts", "recent=" + LiveHistory.RECENT_ALERTS).body());
    }

    /** Each element's JSON text. */
    private static List<String> texts(JsonNode array) {
        List<String> out = new ArrayList<>();
        array.forEach(n -> out.add(Json.write(n)));
        return out;
    }

    private static List<String> sorted(Collection<String> texts) {
        return texts.stream().sorted().toList();
    }

    /** A topic's values as text, in read order. */
    private static List<String> raw(String topic) {
        List<String> out = new ArrayList<>();
        for (ConsumerRecord<String, byte[]> r : KAFKA.readAll(topic, Duration.ofSeconds(30))) {
            out.add(new String(r.value(), StandardCharsets.UTF_8));
        }
        return out;
    }
}
