package org.oddswatch.deploy.sandbox;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Properties;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.oddswatch.deploy.JarProcess;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.deploy.scenario.ScenarioOptions;

/**
 * The sandbox without its own feed ({@code --no-feed}): events produced by outside clients to the
 * printed bootstrap address are counted in {@code /status}. First a plain Kafka producer from this
 * test, then Debian's {@code kcat} where it is installed (that part is skipped otherwise).
 */
class SandboxExternalProducerIT {

    private static final String TOPIC = "clinic-tests";

    @Test
    void eventsFromOutsideProducersAreCounted() throws Exception {
        List<String> clean = Scenario.respiratory(ScenarioOptions.defaults().withSeed(99)).events()
                .limit(40).map(ScenarioEvent::toJson).toList();
        List<String> bad = List.of("{\"id\":\"x1\",\"collectedAt\":", "not json at all",
                "{\"id\":\"x2\",\"collectedAt\":\"2026-01-05T10:00:00Z\",\"result\":\"unclear\"}");
        try (JarProcess sandbox = JarProcess.start("sandbox", "--plain", "--no-feed", "--http", "127.0.0.1:0",
                "--log", "target/sandbox-external-producer.log")) {
            String bootstrap = sandbox.bootstrap();
            Properties props = new Properties();
            props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrap);
            try (KafkaProducer<String, String> producer =
                         new KafkaProducer<>(props, new StringSerializer(), new StringSerializer())) {
                for (String value : clean) {
                    producer.send(new ProducerRecord<>(TOPIC, value));
                }
                for (String value : bad) {
                    producer.send(new ProducerRecord<>(TOPIC, value));
                }
                producer.flush();
            }
            JsonNode counts = awaitConsumed(sandbox, clean.size() + bad.size());
            assertEquals(clean.size(), counts.path("outcomes").path("accepted").asLong(), counts.toString());
            assertEquals(bad.size(), counts.path("outcomes").path("rejected").asLong(), counts.toString());

            Path kcat = kcat();
            if (kcat != null) {
                // the next 25 events of the same feed: new ids, so none is a duplicate
                List<String> more = Scenario.respiratory(ScenarioOptions.defaults().withSeed(99)).events()
                        .skip(clean.size()).limit(25).map(ScenarioEvent::toJson).toList();
                Process p = new ProcessBuilder(kcat.toString(), "-P", "-b", bootstrap, "-t", TOPIC)
                        .redirectErrorStream(true).start();
                try (OutputStream in = p.getOutputStream()) {
                    in.write((String.join("\n", more) + "\n").getBytes(StandardCharsets.UTF_8));
                }
                if (!p.waitFor(30, TimeUnit.SECONDS)) {
                    p.destroyForcibly();
                    throw new AssertionError("kcat did not finish");
                }
                assertEquals(0, p.exitValue(), new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8));
                JsonNode after = awaitConsumed(sandbox, clean.size() + bad.size() + more.size());
                assertEquals(clean.size() + more.size(), after.path("outcomes").path("accepted").asLong(), after.toString());
            } else {
                System.out.println("kcat is not installed: the kcat part of this test was skipped");
            }
            assertEquals(0, sandbox.terminate(Duration.ofSeconds(40)), sandbox.output());
        }
    }

    private static JsonNode awaitConsumed(JarProcess sandbox, long expected) throws IOException, InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(60).toNanos();
        JsonNode counts = null;
        while (System.nanoTime() < deadline) {
            counts = Json.mapper().readTree(sandbox.get("/status").body()).path("counts");
            if (counts.path("consumed").asLong() >= expected) {
                assertEquals(expected, counts.path("consumed").asLong(), counts.toString());
                return counts;
            }
            Thread.sleep(250);
        }
        throw new AssertionError("/status counted " + counts + " instead of " + expected + " records; output:\n"
                + sandbox.output());
    }

    private static Path kcat() {
        for (String dir : System.getenv().getOrDefault("PATH", "").split(java.io.File.pathSeparator)) {
            Path candidate = Path.of(dir, "kcat");
            if (Files.isExecutable(candidate)) {
                return candidate;
            }
        }
        return null;
    }
}
