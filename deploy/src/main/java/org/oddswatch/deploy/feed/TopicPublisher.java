package org.oddswatch.deploy.feed;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.Iterator;
import java.util.Properties;
import java.util.concurrent.atomic.AtomicReference;
import java.util.function.BooleanSupplier;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.oddswatch.deploy.scenario.ScenarioEvent;

/**
 * Sends scenario records to a Kafka topic: key = the region (one stream per partition), value = the
 * record's JSON, record timestamp = its event time ({@code collectedAt}; the emission time for
 * records without a usable one), so that seeking by time finds simulated event times. Idempotent
 * producer with {@code acks=all}. Optionally paced by a {@link SimulatedClock}.
 */
public final class TopicPublisher implements AutoCloseable {

    private static final Duration MAX_SLEEP = Duration.ofMillis(200);

    private final KafkaProducer<String, byte[]> producer;
    private final String topic;
    private final AtomicReference<Exception> failure = new AtomicReference<>();

    /** @param clientProps Kafka client settings (bootstrap servers, security); producer guarantees are added */
    public TopicPublisher(Properties clientProps, String topic) {
        Properties props = new Properties();
        props.putAll(clientProps);
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "true");
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.putIfAbsent(ProducerConfig.LINGER_MS_CONFIG, "20");
        props.putIfAbsent(ProducerConfig.CLIENT_ID_CONFIG, "oddswatch-feed");
        this.producer = new KafkaProducer<>(props, new StringSerializer(), new ByteArraySerializer());
        this.topic = topic;
    }

    /**
     * Sends records until the iterator ends or {@code stop} says so, sleeping as the clock requires.
     *
     * @return records handed to the producer
     * @throws IllegalStateException when a send failed (the first failure is the cause)
     */
    public long publish(Iterator<ScenarioEvent> events, SimulatedClock clock, BooleanSupplier stop)
            throws InterruptedException {
        long handed = 0;
        while (events.hasNext() && !stop.getAsBoolean()) {
            ScenarioEvent e = events.next();
            Duration wait = clock.untilReached(e.emittedAt());
            while (!wait.isZero() && !stop.getAsBoolean()) {
                producer.flush();
                Thread.sleep(Math.max(1, Math.min(wait.toMillis(), MAX_SLEEP.toMillis())));
                wait = clock.untilReached(e.emittedAt());
            }
            send(e);
            handed++;
            Exception failed = failure.get();
            if (failed != null) {
                throw new IllegalStateException("sending to " + topic + " failed: " + failed.getMessage(), failed);
            }
        }
        producer.flush();
        Exception failed = failure.get();
        if (failed != null) {
            throw new IllegalStateException("sending to " + topic + " failed: " + failed.getMessage(), failed);
        }
        return handed;
    }

    private void send(ScenarioEvent e) {
        long timestamp = (e.defect().rejected() ? e.emittedAt() : e.collectedAt()).toEpochMilli();
        ProducerRecord<String, byte[]> record = new ProducerRecord<>(topic, null, timestamp, e.key(),
                e.toJson().getBytes(StandardCharsets.UTF_8));
        producer.send(record, (metadata, exception) -> {
            if (exception != null) {
                failure.compareAndSet(null, exception);
            }
        });
    }

    @Override
    public void close() {
        producer.close(Duration.ofSeconds(10));
    }
}
