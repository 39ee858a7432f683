package org.oddswatch.ingest.kafka;

import java.time.Duration;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.function.Consumer;
import java.util.stream.Collectors;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndTimestamp;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.TimeoutException;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;

/**
 * Reads a topic without a consumer group, every partition from a start (the beginning, or the first
 * record at or after a timestamp) up to the end offsets taken when the read starts. Records of
 * different partitions arrive interleaved as polled, those of one partition in offset order.
 */
public final class BoundedTopicReader implements AutoCloseable {

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final Duration timeout;

    /**
     * @param props reader properties ({@link KafkaClientSettings#reader(String)})
     * @param timeout how long a metadata look-up, or a read without progress, may take
     */
    public BoundedTopicReader(Properties props, Duration timeout) {
        this.consumer = new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.timeout = timeout;
    }

    /** All partitions of the topic in partition order; empty when the topic does not exist. */
    public List<TopicPartition> partitions(String topic) {
        var infos = consumer.partitionsFor(topic, timeout);
        return infos == null ? List.of() : infos.stream().map(p -> new TopicPartition(topic, p.partition()))
                .sorted(Comparator.comparingInt(TopicPartition::partition)).toList();
    }

    /**
     * Hands {@code sink} the records from the first at or after {@code fromMillis} (null: the
     * beginning) to the end offsets taken at the start.
     *
     * @return how many records were handed on
     * @throws TimeoutException when no record arrives for the timeout
     */
    public long read(String topic, Long fromMillis, Consumer<ConsumerRecord<byte[], byte[]>> sink) {
        List<TopicPartition> partitions = partitions(topic);
        if (partitions.isEmpty()) {
            return 0;
        }
        consumer.assign(partitions);
        Map<TopicPartition, Long> end = consumer.endOffsets(partitions, timeout);
        if (fromMillis == null) {
            consumer.seekToBeginning(partitions);
        } else {
            Map<TopicPartition, OffsetAndTimestamp> found = consumer.offsetsForTimes(
                    partitions.stream().collect(Collectors.toMap(tp -> tp, tp -> fromMillis)), timeout);
            partitions.forEach(tp -> consumer.seek(tp, found.get(tp) == null ? end.get(tp) : found.get(tp).offset()));
        }
        long handed = 0;
        long lastProgress = System.nanoTime();
        while (true) {
            List<TopicPartition> open = partitions.stream().filter(tp -> consumer.position(tp, timeout) < end.get(tp)).toList();
            if (open.isEmpty()) {
                return handed;
            }
            consumer.assign(open);
            var records = consumer.poll(Duration.ofMillis(200));
            if (!records.isEmpty()) {
                lastProgress = System.nanoTime();
            } else if (System.nanoTime() - lastProgress > timeout.toNanos()) {
                throw new TimeoutException("no progress reading " + topic + " for " + timeout);
            }
            for (ConsumerRecord<byte[], byte[]> r : records) {
                if (r.offset() < end.get(new TopicPartition(r.topic(), r.partition()))) {
                    sink.accept(r);
                    handed++;
                }
            }
        }
    }

    @Override
    public void close() {
        consumer.close(CloseOptions.timeout(Duration.ofSeconds(5)));
    }
}
