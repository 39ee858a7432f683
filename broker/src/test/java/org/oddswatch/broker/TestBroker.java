package org.oddswatch.broker;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.ExecutionException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringDeserializer;
import org.apache.kafka.common.serialization.StringSerializer;

/**
 * Test-side client steps against any reachable broker (the embedded node, or a container):
 * create topics, produce, read a topic to its end. Only {@link #bootstrapServers()} is needed.
 */
public interface TestBroker {

    /** The {@code bootstrap.servers} value for clients. */
    String bootstrapServers();

    /** Creates topics (ignoring ones that already exist) and waits for their metadata. */
    default void createTopic(String name, int partitions) {
        try (Admin admin = admin()) {
            admin.createTopics(List.of(new NewTopic(name, partitions, (short) 1))).all().get();
        } catch (ExecutionException e) {
            if (!(e.getCause() instanceof TopicExistsException)) {
                throw new IllegalStateException("could not create topic " + name, e.getCause());
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        }
    }

    default Admin admin() {
        Properties props = new Properties();
        props.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
        return Admin.create(props);
    }

    /** Base client settings: bootstrap servers only. */
    default Properties clientProps() {
        Properties props = new Properties();
        props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
        return props;
    }

    /** A producer of string keys and byte values with acks=all and idempotence. */
    default KafkaProducer<String, byte[]> producer() {
        Properties props = clientProps();
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "true");
        props.put(ProducerConfig.LINGER_MS_CONFIG, "5");
        return new KafkaProducer<>(props, new StringSerializer(), new ByteArraySerializer());
    }

    /** Sends values to a topic (with the given keys; a null key list means no keys) and waits for all acks. */
    default void produce(String topic, List<String> keys, List<byte[]> values) {
        produce(topic, keys, values, null);
    }

    /**
     * Sends values with explicit record timestamps (null list: the producer's clock) and waits for
     * every ack; fails if any send failed.
     */
    default void produce(String topic, List<String> keys, List<byte[]> values, List<Long> timestamps) {
        List<java.util.concurrent.Future<?>> acks = new ArrayList<>();
        try (KafkaProducer<String, byte[]> producer = producer()) {
            for (int i = 0; i < values.size(); i++) {
                acks.add(producer.send(new ProducerRecord<>(topic, null, timestamps == null ? null : timestamps.get(i),
                        keys == null ? null : keys.get(i), values.get(i))));
            }
            producer.flush();
            for (var ack : acks) {
                ack.get();
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        } catch (ExecutionException e) {
            throw new IllegalStateException("could not produce to " + topic + ": " + e.getCause(), e.getCause());
        }
    }

    /**
     * Reads every record of every partition of {@code topic} from the beginning up to the end offsets
     * seen at the call, without a consumer group.
     */
    default List<ConsumerRecord<String, byte[]>> readAll(String topic, Duration timeout) {
        Properties props = clientProps();
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.put(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        List<ConsumerRecord<String, byte[]>> out = new ArrayList<>();
        try (KafkaConsumer<String, byte[]> consumer =
                     new KafkaConsumer<>(props, new StringDeserializer(), new ByteArrayDeserializer())) {
            List<TopicPartition> partitions = consumer.partitionsFor(topic, timeout).stream()
                    .map(p -> new TopicPartition(topic, p.partition())).toList();
            consumer.assign(partitions);
            consumer.seekToBeginning(partitions);
            Map<TopicPartition, Long> end = consumer.endOffsets(partitions, timeout);
            long deadline = System.nanoTime() + timeout.toNanos();
            while (!reached(consumer, end)) {
                if (System.nanoTime() > deadline) {
                    throw new IllegalStateException("timed out reading " + topic + " to " + end);
                }
                consumer.poll(Duration.ofMillis(100)).forEach(out::add);
            }
        }
        return out;
    }

    private static boolean reached(KafkaConsumer<?, ?> consumer, Map<TopicPartition, Long> end) {
        for (Map.Entry<TopicPartition, Long> e : end.entrySet()) {
            if (consumer.position(e.getKey()) < e.getValue()) {
                return false;
            }
        }
        return true;
    }
}
