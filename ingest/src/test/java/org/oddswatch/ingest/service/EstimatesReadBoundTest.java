package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.output.OutputStage;

/**
 * The rebuild reads the estimates topic once, bounded in time: from the first record stamped at or
 * after {@code B = S - 120 x step}, {@code S} the re-read start ({@code baseline.from} here, a fixed
 * baseline period). Two final estimates of the stream are put on the topic before the service ever
 * runs, one stamped a day before {@code B} and one a day after, each for a window of its own before
 * the stream's first: after a restart the live page shows the one after the bound with the topic's
 * finals, and never the one before it (an unbounded read would restore it too).
 */
class EstimatesReadBoundTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    private static final Duration DAY = Duration.ofDays(1);

    @Test
    void estimatesStampedBeforeTheBoundAreNotRead() throws Exception {
        String prefix = "readbound";
        String input = prefix + "-tests";
        String estimates = prefix + "-estimates";
        KAFKA.createTopic(input, 1);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        List<TestFeed.Event> events = TestFeed.events(17, 3000, START, Duration.ofDays(84), Duration.ZERO, "north");
        MonitorConfig config = TestDefinitions.config(TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, input,
                null));
        MonitorDefinition monitor = config.monitors().get(0);
        Instant bound = monitor.baseline().from().minus(monitor.window().step().multipliedBy(LiveHistory.WINDOWS));

        // two finals of earlier windows, stamped either side of the bound, ahead of everything the service writes
        String template = ServiceTestSupport.replayFinals(config, input, events).values().stream()
                .filter(json -> ServiceTestSupport.tree(json).path("status").asText().equals("final"))
                .findFirst().orElseThrow();
        String beforeBound = shifted(template, START.minus(DAY.multipliedBy(14)));
        String afterBound = shifted(template, START.minus(DAY.multipliedBy(7)));
        KAFKA.produce(estimates, List.of(key(beforeBound), key(afterBound)),
                List.of(beforeBound.getBytes(StandardCharsets.UTF_8), afterBound.getBytes(StandardCharsets.UTF_8)),
                List.of(bound.minus(DAY).toEpochMilli(), bound.plus(DAY).toEpochMilli()));
        ServiceTestSupport.produce(KAFKA, input, events, true, true);

        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-1").start()) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, Duration.ofSeconds(90));
        }
        List<String> published = new ArrayList<>(ServiceTestSupport.finals(KAFKA, estimates).values());
        assertTrue(published.size() > 5, "final windows before the stop: " + published.size());
        published.remove(beforeBound);
        published.sort(Comparator.comparing(json -> Instant.parse(ServiceTestSupport.tree(json).get("windowEnd").asText())));
        assertEquals(afterBound, published.get(0), "the finals on the topic start with the one put after the bound");

        try (MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-2").start()) {
            ServiceTestSupport.awaitTrue("the restarted service ready", Duration.ofSeconds(90), service::ready);
            assertNull(service.failure());
            JsonNode kept = ServiceTestSupport.tree(service.site()
                    .answer("/api/streams/resp/estimates", "last=" + LiveHistory.WINDOWS).body());
            List<String> shown = new ArrayList<>();
            kept.get("estimates").forEach(n -> shown.add(Json.write(n)));
            assertEquals(windowEnds(published), windowEnds(shown), "the windows stamped at or after the bound");
            assertEquals(published, shown, "their finals as on the topic, oldest window first");
        }
    }

    /** The final estimate moved to the window ending at {@code windowEnd}, one step long. */
    private static String shifted(String json, Instant windowEnd) {
        ObjectNode node = (ObjectNode) ServiceTestSupport.tree(json);
        node.put("windowStart", windowEnd.minus(DAY.multipliedBy(7)).toString());
        node.put("windowEnd", windowEnd.toString());
        return Json.write(node);
    }

    private static List<String> windowEnds(List<String> finals) {
        return finals.stream().map(json -> ServiceTestSupport.tree(json).get("windowEnd").asText()).toList();
    }

    private static String key(String json) throws Exception {
        return OutputStage.estimateKey(Json.mapper().readValue(json, WindowEstimate.class));
    }
}
