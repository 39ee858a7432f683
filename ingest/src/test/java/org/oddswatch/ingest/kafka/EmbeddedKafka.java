package org.oddswatch.ingest.kafka;

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
import org.apache.kafka.common.test.KafkaClusterTestKit;
import org.apache.kafka.common.test.TestKitNodes;
import org.junit.jupiter.api.extension.AfterAllCallback;
import org.junit.jupiter.api.extension.BeforeAllCallback;
import org.junit.jupiter.api.extension.ExtensionContext;

/**
 * A real in-process Kafka cluster for tests: one node acting as KRaft controller and broker, from
 * Kafka's own test kit ({@link KafkaClusterTestKit}). Internal topics use replication factor 1; the
 * client listener is bound to 127.0.0.1.
 *
 * <p>Use it either as a JUnit 5 extension, shared by all tests of a class:
 * <pre>{@code
 * @RegisterExtension
 * static final EmbeddedKafka KAFKA = new EmbeddedKafka();
 * }</pre>
 * or as an {@link AutoCloseable} with {@link #start()} in a try-with-resources block.
 *
 * <p>Gotcha: the test kit pre-binds the controller's quorum port itself (on the wildcard address);
 * only the broker listener that clients use can be pinned to 127.0.0.1 through {@code listeners}.
 */
public final class EmbeddedKafka implements AutoCloseable, BeforeAllCallback, AfterAllCallback {

    private static final String BROKER_LISTENER = "EXTERNAL";
    private static final String CONTROLLER_LISTENER = "CONTROLLER";

    private final Map<String, String> extraBrokerProps;
    private KafkaClusterTestKit cluster;

    public EmbeddedKafka() {
        this(Map.of());
    }

    /** @param extraBrokerProps further broker settings (for instance {@code group.initial.rebalance.delay.ms}) */
    public EmbeddedKafka(Map<String, String> extraBrokerProps) {
        this.extraBrokerProps = Map.copyOf(extraBrokerProps);
    }

    /** Formats the storage, starts the node and waits until the broker is ready. Idempotent. */
    public synchronized EmbeddedKafka start() {
        if (cluster != null) {
            return this;
        }
        try {
            TestKitNodes nodes = new TestKitNodes.Builder()
                    .setCombined(true)
                    .setNumBrokerNodes(1)
                    .setNumControllerNodes(1)
                    .build();
            KafkaClusterTestKit.Builder builder = new KafkaClusterTestKit.Builder(nodes)
                    .setConfigProp("listeners", BROKER_LISTENER + "://127.0.0.1:0," + CONTROLLER_LISTENER + "://127.0.0.1:0")
                    .setConfigProp("offsets.topic.replication.factor", "1")
                    .setConfigProp("offsets.topic.num.partitions", "1")
                    .setConfigProp("transaction.state.log.replication.factor", "1")
                    .setConfigProp("transaction.state.log.min.isr", "1")
                    .setConfigProp("group.initial.rebalance.delay.ms", "0")
                    .setConfigProp("auto.create.topics.enable", "false")
                    // Tests stamp records with past event times; time-based retention would delete
                    // them within minutes of the broker's start.
                    .setConfigProp("log.retention.ms", "-1")
                    .setConfigProp("num.partitions", "1");
            extraBrokerProps.forEach(builder::setConfigProp);
            KafkaClusterTestKit started = builder.build();
            started.format();
            started.startup();
            started.waitForReadyBrokers();
            cluster = started;
            return this;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while starting the embedded Kafka node", e);
        } catch (Exception e) {
            throw new IllegalStateException("could not start the embedded Kafka node: " + e.getMessage(), e);
        }
    }

    /** The {@code bootstrap.servers} value for clients. */
    public String bootstrapServers() {
        // The test kit names the bound port as localhost:<port>; the listener itself is on 127.0.0.1.
        return running().bootstrapServers().replace("localhost:", "127.0.0.1:");
    }

    /** Creates topics (ignoring ones that already exist) and waits for their metadata. */
    public void createTopic(String name, int partitions) {
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

    public Admin admin() {
        Properties props = new Properties();
        props.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
        return Admin.create(props);
    }

    /** Base client settings: bootstrap servers only. */
    public Properties clientProps() {
        Properties props = new Properties();
        props.put(ProducerConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
        return props;
    }

    /** A producer of string keys and byte values with acks=all and idempotence. */
    public KafkaProducer<String, byte[]> producer() {
        Properties props = clientProps();
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "true");
        props.put(ProducerConfig.LINGER_MS_CONFIG, "5");
        return new KafkaProducer<>(props, new StringSerializer(), new ByteArraySerializer());
    }

    /** Sends values to a topic (with the given keys; a null key list means no keys) and waits for all acks. */
    public void produce(String topic, List<String> keys, List<byte[]> values) {
        produce(topic, keys, values, null);
    }

    /**
     * Sends values with explicit record timestamps (null list: the producer's clock) and waits for
     * every ack; fails if any send failed.
     */
    public void produce(String topic, List<String> keys, List<byte[]> values, List<Long> timestamps) {
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
    public List<ConsumerRecord<String, byte[]>> readAll(String topic, Duration timeout) {
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

    private KafkaClusterTestKit running() {
        if (cluster == null) {
            throw new IllegalStateException("embedded Kafka is not started");
        }
        return cluster;
    }

    @Override
    public synchronized void close() {
        if (cluster != null) {
            try {
                cluster.close();
            } catch (Exception e) {
                throw new IllegalStateException("could not stop the embedded Kafka node", e);
            } finally {
                cluster = null;
            }
        }
    }

    @Override
    public void beforeAll(ExtensionContext context) {
        start();
    }

    @Override
    public void afterAll(ExtensionContext context) {
        close();
    }
}
