package org.oddswatch.deploy.sandbox;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.time.Duration;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Deque;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.function.Consumer;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.WakeupException;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.StringDeserializer;
import org.oddswatch.alerts.json.Json;

/**
 * Reads the service's estimates and alerts topics like any outside consumer would (no group, from
 * the beginning) and keeps what the live summary shows: per stream the newest final and the newest
 * interim estimate, and the alert messages in arrival order. Runs its own thread; snapshots are
 * thread-safe copies.
 */
public final class OutputWatcher implements AutoCloseable {

    private static final int KEPT_ALERTS = 200;

    private final KafkaConsumer<String, byte[]> consumer;
    private final Set<String> estimateTopics;
    private final Set<String> alertTopics;
    private final Consumer<JsonNode> onFinal;
    private final Consumer<JsonNode> onAlert;
    private final Map<String, StreamView> streams = new LinkedHashMap<>();
    private final Deque<JsonNode> alerts = new ArrayDeque<>();
    private final Thread thread;
    private volatile boolean running = true;

    /** Latest estimates of one stream (JSON trees as published). */
    public record StreamView(String stream, JsonNode lastFinal, JsonNode open) {
    }

    /**
     * @param onFinal called (on the watcher thread) for every new final estimate
     * @param onAlert called for every alert message
     */
    public OutputWatcher(Properties clientProps, Set<String> estimateTopics, Set<String> alertTopics,
                         Consumer<JsonNode> onFinal, Consumer<JsonNode> onAlert) {
        Properties props = new Properties();
        props.putAll(clientProps);
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.put(ConsumerConfig.CLIENT_ID_CONFIG, "oddswatch-sandbox-view");
        this.consumer = new KafkaConsumer<>(props, new StringDeserializer(),
                new ByteArrayDeserializer());
        this.estimateTopics = Set.copyOf(estimateTopics);
        this.alertTopics = Set.copyOf(alertTopics);
        this.onFinal = onFinal;
        this.onAlert = onAlert;
        this.thread = new Thread(this::loop, "oddswatch-sandbox-view");
        thread.setDaemon(true);
    }

    public OutputWatcher start() {
        List<TopicPartition> partitions = new ArrayList<>();
        for (String topic : concat()) {
            consumer.partitionsFor(topic, Duration.ofSeconds(30))
                    .forEach(p -> partitions.add(new TopicPartition(topic, p.partition())));
        }
        consumer.assign(partitions);
        consumer.seekToBeginning(partitions);
        thread.start();
        return this;
    }

    private List<String> concat() {
        List<String> all = new ArrayList<>(estimateTopics);
        alertTopics.stream().filter(t -> !estimateTopics.contains(t)).forEach(all::add);
        return all;
    }

    private void loop() {
        try {
            while (running) {
                for (ConsumerRecord<String, byte[]> r : consumer.poll(Duration.ofMillis(200))) {
                    JsonNode json;
                    try {
                        json = Json.mapper().readTree(r.value());
                    } catch (IOException e) {
                        continue;
                    }
                    if (alertTopics.contains(r.topic())) {
                        alert(json);
                    } else {
                        estimate(json);
                    }
                }
            }
        } catch (WakeupException stopping) {
            // close() was called
        } finally {
            consumer.close(Duration.ofSeconds(2));
        }
    }

    private void estimate(JsonNode json) {
        String stream = json.path("stream").asText();
        boolean isFinal = "final".equals(json.path("status").asText());
        synchronized (this) {
            StreamView old = streams.getOrDefault(stream, new StreamView(stream, null, null));
            if (isFinal) {
                boolean newer = old.lastFinal() == null
                        || json.path("windowEnd").asText().compareTo(old.lastFinal().path("windowEnd").asText()) > 0;
                if (!newer) {
                    return;
                }
                JsonNode open = old.open() != null
                        && old.open().path("windowEnd").asText().compareTo(json.path("windowEnd").asText()) <= 0
                        ? null : old.open();
                streams.put(stream, new StreamView(stream, json, open));
            } else {
                streams.put(stream, new StreamView(stream, old.lastFinal(), json));
            }
        }
        if (isFinal) {
            onFinal.accept(json);
        }
    }

    private void alert(JsonNode json) {
        synchronized (this) {
            alerts.addLast(json);
            while (alerts.size() > KEPT_ALERTS) {
                alerts.removeFirst();
            }
        }
        onAlert.accept(json);
    }

    /** Streams in order of first appearance. */
    public synchronized List<StreamView> streams() {
        return List.copyOf(streams.values());
    }

    /** The newest alert messages, oldest first. */
    public synchronized List<JsonNode> alerts() {
        return List.copyOf(alerts);
    }

    @Override
    public void close() throws InterruptedException {
        running = false;
        consumer.wakeup();
        thread.join(5000);
    }
}
