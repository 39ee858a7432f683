package org.oddswatch.ingest.kafka;

import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.function.Consumer;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndTimestamp;
import org.apache.kafka.common.PartitionInfo;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;

/**
 * Reads a bounded range of a topic without a consumer group: every partition from a start (the
 * beginning, or the first offset at or after a timestamp) up to the end offsets taken when the read
 * starts, or up to an end timestamp. Records of different partitions arrive interleaved as polled;
 * within a partition they arrive in offset order.
 */
public final class BoundedTopicReader implements AutoCloseable {

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final Duration timeout;

    /**
     * @param props reader properties (see {@link KafkaClientSettings#reader(String)})
     * @param timeout how long metadata lookups and a read without progress may take
     */
    public BoundedTopicReader(Properties props, Duration timeout) {
        this.consumer = new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.timeout = timeout;
    }

    /** All partitions of the topic, in partition order; empty when the topic does not exist. */
    public List<TopicPartition> partitions(String topic) {
        List<PartitionInfo> infos = consumer.partitionsFor(topic, timeout);
        List<TopicPartition> out = new ArrayList<>();
        if (infos != null) {
            infos.forEach(p -> out.add(new TopicPartition(topic, p.partition())));
        }
        out.sort((a, b) -> Integer.compare(a.partition(), b.partition()));
        return out;
    }

    /** Reads the whole topic from the beginning to the current end offsets. */
    public long readAll(String topic, Consumer<ConsumerRecord<byte[], byte[]>> sink) {
        return read(topic, null, null, sink);
    }

    /**
     * Reads records with timestamps in [fromMillis, toMillis) (either bound may be null), stopping
     * at the end offsets taken at the start.
     *
     * @return how many records were handed to the sink
     */
    public long read(String topic, Long fromMillis, Long toMillis, Consumer<ConsumerRecord<byte[], byte[]>> sink) {
        List<TopicPartition> partitions = partitions(topic);
        if (partitions.isEmpty()) {
            return 0;
        }
        consumer.assign(partitions);
        Map<TopicPartition, Long> end = new HashMap<>(consumer.endOffsets(partitions, timeout));
        Map<TopicPartition, Long> start = startOffsets(partitions, fromMillis);
        if (toMillis != null) {
            Map<TopicPartition, Long> endByTime = startOffsets(partitions, toMillis);
            endByTime.forEach((tp, offset) -> end.merge(tp, offset, Math::min));
        }
        for (TopicPartition tp : partitions) {
            consumer.seek(tp, start.get(tp));
        }
        long handed = 0;
        long lastProgress = System.nanoTime();
        while (true) {
            List<TopicPartition> open = new ArrayList<>();
            for (TopicPartition tp : partitions) {
                if (consumer.position(tp, timeout) < end.get(tp)) {
                    open.add(tp);
                }
            }
            if (open.isEmpty()) {
                return handed;
            }
            consumer.assign(open);
            var records = consumer.poll(Duration.ofMillis(200));
            if (!records.isEmpty()) {
                lastProgress = System.nanoTime();
            } else if (System.nanoTime() - lastProgress > timeout.toNanos()) {
                throw new org.apache.kafka.common.errors.TimeoutException("no progress reading " + topic + " for " + timeout);
            }
            for (ConsumerRecord<byte[], byte[]> r : records) {
                if (r.offset() < end.get(new TopicPartition(r.topic(), r.partition()))) {
                    sink.accept(r);
                    handed++;
                }
            }
        }
    }

    private Map<TopicPartition, Long> startOffsets(List<TopicPartition> partitions, Long millis) {
        Map<TopicPartition, Long> out = new HashMap<>();
        Map<TopicPartition, Long> beginning = consumer.beginningOffsets(partitions, timeout);
        Map<TopicPartition, Long> end = consumer.endOffsets(partitions, timeout);
        if (millis == null) {
            return new HashMap<>(beginning);
        }
        Map<TopicPartition, Long> query = new HashMap<>();
        partitions.forEach(tp -> query.put(tp, millis));
        Map<TopicPartition, OffsetAndTimestamp> found = consumer.offsetsForTimes(query, timeout);
        for (TopicPartition tp : partitions) {
            OffsetAndTimestamp at = found.get(tp);
            out.put(tp, at == null ? end.get(tp) : at.offset());
        }
        return out;
    }

    @Override
    public void close() {
        consumer.close(CloseOptions.timeout(Duration.ofSeconds(5)));
    }
}
