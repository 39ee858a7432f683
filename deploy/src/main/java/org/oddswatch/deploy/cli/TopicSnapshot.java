package org.oddswatch.deploy.cli;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.BufferedWriter;
import java.io.IOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.ingest.kafka.BoundedTopicReader;
import org.oddswatch.ingest.kafka.KafkaClientSettings;

/**
 * A topic range as a temporary JSON Lines file, so that {@code replay --topic} and
 * {@code baseline --topic} run the same file code path as {@code --input}. Records are written
 * partition by partition, each in offset order (one stream lives on one partition, so every stream
 * sees its records in the order the live service saw them). A value spanning several lines is written
 * compactly when it is JSON, else with its line breaks replaced by spaces (it is rejected either way).
 * Line {@code n} of the file is the {@code n}-th record so written.
 */
final class TopicSnapshot implements AutoCloseable {

    private final Path file;
    private final long records;

    private TopicSnapshot(Path file, long records) {
        this.file = file;
        this.records = records;
    }

    /**
     * Reads every partition of {@code topic} from the first record with a timestamp at or after
     * {@code from} (the beginning when null) to the end offsets at the start of the read.
     */
    static TopicSnapshot read(Map<String, String> kafka, String topic, Instant from) throws IOException {
        Properties props = new KafkaClientSettings(kafka).reader("oddswatch-replay");
        Map<Integer, Path> parts = new TreeMap<>();
        Map<Integer, Writer> writers = new TreeMap<>();
        long count;
        try (BoundedTopicReader reader = new BoundedTopicReader(props, Duration.ofSeconds(30))) {
            List<TopicPartition> partitions = reader.partitions(topic);
            if (partitions.isEmpty()) {
                throw UserError.config("topic '" + topic + "' does not exist at " + kafka.get("bootstrap.servers"));
            }
            for (TopicPartition tp : partitions) {
                Path part = Files.createTempFile("oddswatch-" + topic + "-" + tp.partition() + "-", ".jsonl");
                parts.put(tp.partition(), part);
                writers.put(tp.partition(), Files.newBufferedWriter(part, StandardCharsets.UTF_8));
            }
            count = reader.read(topic, from == null ? null : from.toEpochMilli(), r -> write(writers, r));
        } finally {
            for (Writer w : writers.values()) {
                w.close();
            }
        }
        Path all = Files.createTempFile("oddswatch-" + topic + "-", ".jsonl");
        try (BufferedWriter out = Files.newBufferedWriter(all, StandardCharsets.UTF_8)) {
            for (Path part : parts.values()) {
                for (String line : (Iterable<String>) Files.lines(part, StandardCharsets.UTF_8)::iterator) {
                    out.write(line);
                    out.write('\n');
                }
                Files.deleteIfExists(part);
            }
        }
        return new TopicSnapshot(all, count);
    }

    private static void write(Map<Integer, Writer> writers, ConsumerRecord<byte[], byte[]> r) {
        String text = r.value() == null ? "" : new String(r.value(), StandardCharsets.UTF_8);
        if (text.indexOf('\n') >= 0 || text.indexOf('\r') >= 0) {
            try {
                JsonNode tree = Json.mapper().readTree(text);
                text = Json.mapper().writeValueAsString(tree);
            } catch (IOException notJson) {
                text = text.replace('\r', ' ').replace('\n', ' ');
            }
        }
        try {
            Writer w = writers.get(r.partition());
            w.write(text);
            w.write('\n');
        } catch (IOException e) {
            throw new java.io.UncheckedIOException(e);
        }
    }

    Path file() {
        return file;
    }

    long records() {
        return records;
    }

    @Override
    public void close() throws IOException {
        Files.deleteIfExists(file);
    }
}
