package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.JsonNode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.deploy.JarProcess;

/**
 * {@code kill -9} of the packaged service: the process is killed with SIGKILL as soon as it has
 * consumed the whole feed (typically before its next commit, so the second instance processes part
 * of the feed again), a second process starts, rebuilds from the topic and finishes. Every final
 * estimate published (a repeated one only with the same content) equals the one of
 * {@code replay --topic} over the same topic.
 */
class KillNineIT {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension(Map.of("log.retention.ms", "-1"));

    @TempDir
    Path dir;

    @Test
    void aKilledInstanceIsReplacedWithoutLossAndFinalsEqualReplay() throws Exception {
        ExampleTopics.create(KAFKA);
        // The group notices the killed member only after its session timeout: 10 s here instead of
        // the default 45 s, to keep the test short.
        Map<String, String> env = Map.of("ODDSWATCH_KAFKA_BOOTSTRAP_SERVERS", KAFKA.bootstrapServers(),
                "ODDSWATCH_KAFKA_SESSION_TIMEOUT_MS", "10000");
        long records = ExampleTopics.simulate(KAFKA, "--duration", "12w");

        try (JarProcess first = JarProcess.start(env, "run", "--config", ExampleTopics.EXAMPLE.toString(),
                "--http", "127.0.0.1:0", "--instance", "first")) {
            awaitConsumed(first, records);
            first.kill();
        }
        long killed = System.nanoTime();
        long committedAfterKill = committed();
        long ready = 0;
        try (JarProcess second = JarProcess.start(env, "run", "--config", ExampleTopics.EXAMPLE.toString(),
                "--http", "127.0.0.1:0", "--instance", "second")) {
            long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
            while (committed() < records || ready == 0) {
                if (ready == 0 && second.get("/health").statusCode() == 200) {
                    ready = System.nanoTime();
                }
                if (System.nanoTime() > deadline) {
                    fail("the second instance did not catch up:\n" + second.output());
                }
                Thread.sleep(250);
            }
            assertEquals(records - committedAfterKill,
                    Json.mapper().readTree(second.get("/status").body()).path("counts").path("consumed").asLong(),
                    "the second instance processes exactly what the first had not committed");
            assertEquals(0, second.terminate(Duration.ofSeconds(60)), second.output());
        }
        System.out.printf("kill -9 figures: %d of %d records committed at the kill; the second instance ready "
                + "%d ms after the kill (session timeout 10 s)%n", committedAfterKill, records, (ready - killed) / 1_000_000);

        Map<String, String> published = new TreeMap<>();
        for (ConsumerRecord<String, byte[]> r : KAFKA.readAll("oddswatch-estimates", Duration.ofSeconds(30))) {
            String json = new String(r.value(), StandardCharsets.UTF_8);
            if ("final".equals(Json.mapper().readTree(json).path("status").asText())) {
                String previous = published.put(r.key(), json);
                if (previous != null && !previous.equals(json)) {
                    fail("two different finals for " + r.key());
                }
            }
        }
        // 12 weeks: three streams with 28-day windows every week, final once 4 weeks are past
        assertTrue(published.size() >= 20, "final estimates published: " + published.size());
        Path out = dir.resolve("replay");
        JarProcess replay = JarProcess.start(env, "replay", "--config", ExampleTopics.EXAMPLE.toString(), "--topic",
                ExampleTopics.INPUT, "--out", out.toString());
        assertEquals(0, replay.awaitExit(Duration.ofSeconds(90)), replay.output());
        Set<String> replayed = new HashSet<>(Files.readAllLines(out.resolve("estimates.jsonl"), StandardCharsets.UTF_8));
        for (String estimate : published.values()) {
            assertTrue(replayed.contains(estimate), "replay lacks the published estimate " + estimate);
        }
    }

    private static void awaitConsumed(JarProcess run, long records) throws Exception {
        long deadline = System.nanoTime() + Duration.ofSeconds(90).toNanos();
        while (System.nanoTime() < deadline) {
            JsonNode counts = Json.mapper().readTree(run.get("/status").body()).path("counts");
            if (counts.path("consumed").asLong() >= records) {
                return;
            }
            Thread.sleep(20);
        }
        fail("not consumed in time:\n" + run.output());
    }

    /** The group's committed offset of the input partition (0 when none). */
    private static long committed() throws Exception {
        try (Admin admin = KAFKA.admin()) {
            OffsetAndMetadata c = admin.listConsumerGroupOffsets("oddswatch-respiratory").partitionsToOffsetAndMetadata().get()
                    .get(new TopicPartition(ExampleTopics.INPUT, 0));
            return c == null ? 0 : c.offset();
        }
    }
}
