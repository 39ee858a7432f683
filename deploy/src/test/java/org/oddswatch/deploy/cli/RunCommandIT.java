package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.deploy.JarProcess;

/**
 * The packaged jar against a real (embedded, single-node KRaft) broker: {@code simulate --topic}
 * feeds the input topic, {@code run} monitors it until SIGTERM (exit 0), and {@code replay --topic}
 * of the same topic writes the same final estimates the service published.
 */
class RunCommandIT {

    // the simulated dates lie in the past: keep the records however old their timestamps
    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension(Map.of("log.retention.ms", "-1"));

    private static final String INPUT = ExampleTopics.INPUT;
    private static final Path EXAMPLE = ExampleTopics.EXAMPLE;

    @TempDir
    Path dir;

    @Test
    void simulateRunAndReplayAgreeOnTheTopic() throws Exception {
        ExampleTopics.create(KAFKA);
        Map<String, String> env = Map.of("ODDSWATCH_KAFKA_BOOTSTRAP_SERVERS", KAFKA.bootstrapServers());

        JarProcess missing = JarProcess.start("simulate", "--topic", "no-such-topic", "--bootstrap",
                KAFKA.bootstrapServers(), "--duration", "1w");
        assertEquals(2, missing.awaitExit(Duration.ofSeconds(60)), missing.output());
        assertTrue(missing.output().contains("topic 'no-such-topic' does not exist"), missing.output());

        long records = ExampleTopics.simulate(KAFKA, "--duration", "20w", "--defects", "0.01");

        try (JarProcess run = JarProcess.start(env, "run", "--config", EXAMPLE.toString(), "--http", "127.0.0.1:0",
                "--instance", "it")) {
            long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
            JsonNode counts = null;
            while (System.nanoTime() < deadline) {
                counts = Json.mapper().readTree(run.get("/status").body()).path("counts");
                if (counts.path("consumed").asLong() >= records) {
                    break;
                }
                Thread.sleep(250);
            }
            assertEquals(records, counts.path("consumed").asLong(), counts + "\n" + run.output());
            assertEquals(200, run.get("/health").statusCode());
            assertEquals(0, run.terminate(Duration.ofSeconds(60)), run.output());
            assertTrue(run.output().contains("stopped"), run.output());
        }

        List<String> published = new ArrayList<>();
        for (ConsumerRecord<String, byte[]> r : KAFKA.readAll("oddswatch-estimates", Duration.ofSeconds(30))) {
            String json = new String(r.value(), StandardCharsets.UTF_8);
            if ("final".equals(Json.mapper().readTree(json).path("status").asText())) {
                published.add(json);
            }
        }
        // 20 weeks: two monitors (three streams) with weekly windows
        assertTrue(published.size() >= 45, "final estimates published: " + published.size());
        boolean driftRaised = false;
        for (ConsumerRecord<String, byte[]> r : KAFKA.readAll("oddswatch-alerts", Duration.ofSeconds(30))) {
            JsonNode a = Json.mapper().readTree(r.value());
            driftRaised |= "odds-ratio-drift".equals(a.path("rule").asText()) && "raised".equals(a.path("state").asText());
        }
        assertTrue(driftRaised, "the week-16 doubling raised an odds-ratio drift alert in the live service");

        Path out = dir.resolve("replay");
        JarProcess replay = JarProcess.start(env, "replay", "--config", EXAMPLE.toString(), "--topic", INPUT, "--out",
                out.toString());
        assertEquals(0, replay.awaitExit(Duration.ofSeconds(90)), replay.output());
        List<String> replayed = Files.readAllLines(out.resolve("estimates.jsonl"), StandardCharsets.UTF_8);
        assertTrue(Files.readString(out.resolve("report.html")).contains("Chart.js v"), "the packaged jar inlines Chart.js");
        // the replay also closes the windows still open at the end of the topic; all the others are identical
        for (String estimate : published) {
            assertTrue(replayed.contains(estimate), "replay lacks the published estimate " + estimate);
        }
        assertTrue(replayed.size() >= published.size());
    }
}
