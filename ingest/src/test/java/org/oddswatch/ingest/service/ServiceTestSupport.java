package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.function.BooleanSupplier;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.OffsetSpec;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.broker.TestBroker;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/** Shared steps of the service tests: produce, wait, read outputs, and the file-replay reference. */
final class ServiceTestSupport {

    private ServiceTestSupport() {
    }

    /** Produces the events, keyed by region when {@code keyed}, and waits for every ack. */
    static void produce(TestBroker kafka, String topic, List<TestFeed.Event> events, boolean keyed) {
        produce(kafka, topic, events, keyed, false);
    }

    /** As above; with {@code eventTimestamps} each record's timestamp is its event time. */
    static void produce(TestBroker kafka, String topic, List<TestFeed.Event> events, boolean keyed,
                        boolean eventTimestamps) {
        List<String> keys = new ArrayList<>();
        List<byte[]> values = new ArrayList<>();
        List<Long> timestamps = new ArrayList<>();
        for (TestFeed.Event e : events) {
            keys.add(keyed ? e.region() : null);
            values.add(e.json());
            timestamps.add(e.time().toEpochMilli());
        }
        kafka.produce(topic, keys, values, eventTimestamps ? timestamps : null);
    }

    /** The final estimates on a topic, by key; fails on two finals for one key, even identical ones. */
    static Map<String, String> finals(TestBroker kafka, String topic) {
        return finals(kafka, topic, false);
    }

    /**
     * The final estimates on a topic, by key. After a fault, at-least-once delivery may publish a
     * final twice, but only with the same content; two different finals for one key fail.
     */
    static Map<String, String> finalsRepeatedAlike(TestBroker kafka, String topic) {
        return finals(kafka, topic, true);
    }

    private static Map<String, String> finals(TestBroker kafka, String topic, boolean repeatsAllowed) {
        Map<String, String> out = new TreeMap<>();
        for (ConsumerRecord<String, byte[]> r : kafka.readAll(topic, Duration.ofSeconds(30))) {
            String json = new String(r.value(), StandardCharsets.UTF_8);
            if (tree(json).path("status").asText().equals("final")) {
                String previous = out.put(r.key(), json);
                if (previous != null && !(repeatsAllowed && previous.equals(json))) {
                    fail("two final estimates for " + r.key() + (previous.equals(json) ? " (identical)" : ""));
                }
            }
        }
        return out;
    }

    /** Values of a topic as JSON trees, in read order. */
    static List<JsonNode> values(TestBroker kafka, String topic) {
        List<JsonNode> out = new ArrayList<>();
        for (ConsumerRecord<String, byte[]> r : kafka.readAll(topic, Duration.ofSeconds(30))) {
            out.add(tree(new String(r.value(), StandardCharsets.UTF_8)));
        }
        return out;
    }

    static JsonNode tree(String json) {
        try {
            return Json.mapper().readTree(json);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /**
     * The reference: the same events written to a JSON Lines file and replayed with
     * {@link ReplayRunner} (every window closed at the end); its final estimates by topic key.
     */
    static Map<String, String> replayFinals(MonitorConfig config, String topic, List<TestFeed.Event> events) {
        try {
            Path dir = Files.createTempDirectory("oddswatch-replay");
            Path input = dir.resolve("events.jsonl");
            StringBuilder lines = new StringBuilder();
            events.forEach(e -> lines.append(e.text()).append('\n'));
            Files.writeString(input, lines, StandardCharsets.UTF_8);
            ReplayRunner.run(config, new ReplayRequest(null, input, dir.resolve("out"), null, null, null, topic, false));
            Map<String, String> out = new TreeMap<>();
            for (String json : Files.readAllLines(dir.resolve("out").resolve(ReplayRunner.ESTIMATES))) {
                WindowEstimate estimate = Json.mapper().readValue(json, WindowEstimate.class);
                if (out.put(OutputStage.estimateKey(estimate), json) != null) {
                    fail("replay wrote two estimates for " + OutputStage.estimateKey(estimate));
                }
            }
            return out;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** Waits until the group has committed the end offset of every partition of {@code topic}. */
    static void awaitCommitted(TestBroker kafka, String group, String topic, Duration timeout) {
        awaitTrue("group " + group + " to commit the end of " + topic, timeout, () -> caughtUp(kafka, group, topic));
    }

    static boolean caughtUp(TestBroker kafka, String group, String topic) {
        try (Admin admin = kafka.admin()) {
            Map<TopicPartition, OffsetAndMetadata> committed =
                    admin.listConsumerGroupOffsets(group).partitionsToOffsetAndMetadata().get();
            Map<TopicPartition, OffsetSpec> query = new TreeMap<>((a, b) -> Integer.compare(a.partition(), b.partition()));
            int partitions = admin.describeTopics(List.of(topic)).allTopicNames().get().get(topic).partitions().size();
            for (int p = 0; p < partitions; p++) {
                query.put(new TopicPartition(topic, p), OffsetSpec.latest());
            }
            var ends = admin.listOffsets(query).all().get();
            for (var e : ends.entrySet()) {
                OffsetAndMetadata c = committed.get(e.getKey());
                long end = e.getValue().offset();
                if (end > 0 && (c == null || c.offset() < end)) {
                    return false;
                }
            }
            return true;
        } catch (Exception e) {
            return false;
        }
    }

    static void awaitTrue(String what, Duration timeout, BooleanSupplier condition) {
        long deadline = System.nanoTime() + timeout.toNanos();
        while (!condition.getAsBoolean()) {
            if (System.nanoTime() > deadline) {
                fail("timed out waiting for " + what);
            }
            try {
                Thread.sleep(100);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                fail("interrupted waiting for " + what);
            }
        }
    }

    /** Asserts the two maps of key to JSON are equal, naming the first difference. */
    static void assertSameEstimates(Map<String, String> expected, Map<String, String> actual) {
        assertEquals(expected.keySet(), actual.keySet(), "estimate keys");
        for (Map.Entry<String, String> e : expected.entrySet()) {
            assertEquals(e.getValue(), actual.get(e.getKey()), "estimate " + e.getKey());
        }
    }
}
