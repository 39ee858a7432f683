package org.oddswatch.ingest.kafka;

import java.util.Map;
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
public final class EmbeddedKafka implements TestBroker, AutoCloseable, BeforeAllCallback, AfterAllCallback {

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
    @Override
    public String bootstrapServers() {
        // The test kit names the bound port as localhost:<port>; the listener itself is on 127.0.0.1.
        return running().bootstrapServers().replace("localhost:", "127.0.0.1:");
    }

    /**
     * Shuts the broker down (the controller keeps running): clients lose every connection and the
     * client port refuses them until {@link #restartBroker()}. Data and committed offsets are kept.
     */
    public synchronized void stopBroker() {
        running().brokers().values().forEach(b -> b.shutdown());
    }

    /** Starts the broker stopped by {@link #stopBroker()} again on the same port and waits until it is ready. */
    public synchronized void restartBroker() {
        try {
            running().brokers().values().forEach(b -> b.startup());
            running().waitForReadyBrokers();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        } catch (Exception e) {
            throw new IllegalStateException("could not restart the embedded broker: " + e.getMessage(), e);
        }
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
