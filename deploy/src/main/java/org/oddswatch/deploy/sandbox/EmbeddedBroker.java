package org.oddswatch.deploy.sandbox;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.test.KafkaClusterTestKit;
import org.apache.kafka.common.test.TestKitNodes;

/**
 * A single-node Kafka cluster inside this process for the sandbox: one node acting as KRaft
 * controller and broker, from Kafka's own test kit ({@link KafkaClusterTestKit}), internal topics
 * with replication factor 1, data in a temporary directory deleted on close.
 *
 * <p>The client listener is bound to 127.0.0.1 (port 0 picks a free one). The test kit binds the
 * controller's quorum port itself on the wildcard address; no setting changes that, so the sandbox
 * is meant for a workstation, not for a shared host.
 */
public final class EmbeddedBroker implements AutoCloseable {

    private final KafkaClusterTestKit cluster;

    private EmbeddedBroker(KafkaClusterTestKit cluster) {
        this.cluster = cluster;
    }

    /**
     * Formats storage, starts the node and waits until the broker is ready.
     *
     * @param port client port on 127.0.0.1, 0 for any free port
     */
    public static EmbeddedBroker start(int port) throws Exception {
        TestKitNodes nodes = new TestKitNodes.Builder()
                .setCombined(true)
                .setNumBrokerNodes(1)
                .setNumControllerNodes(1)
                .build();
        KafkaClusterTestKit cluster = new KafkaClusterTestKit.Builder(nodes)
                .setConfigProp("listeners", "EXTERNAL://127.0.0.1:" + port + ",CONTROLLER://127.0.0.1:0")
                .setConfigProp("offsets.topic.replication.factor", "1")
                .setConfigProp("offsets.topic.num.partitions", "1")
                .setConfigProp("transaction.state.log.replication.factor", "1")
                .setConfigProp("transaction.state.log.min.isr", "1")
                .setConfigProp("group.initial.rebalance.delay.ms", "0")
                .setConfigProp("auto.create.topics.enable", "false")
                .setConfigProp("num.partitions", "1")
                .build();
        // format() reports on System.out; keep the command's own output clean
        java.io.PrintStream stdout = System.out;
        System.setOut(new java.io.PrintStream(java.io.OutputStream.nullOutputStream()));
        try {
            cluster.format();
            cluster.startup();
            cluster.waitForReadyBrokers();
        } catch (Exception e) {
            cluster.close();
            throw e;
        } finally {
            System.setOut(stdout);
        }
        return new EmbeddedBroker(cluster);
    }

    /** The {@code bootstrap.servers} value for any Kafka client on this machine. */
    public String bootstrapServers() {
        // the kit names the bound port as localhost:<port>; the listener itself is on 127.0.0.1
        return cluster.bootstrapServers().replace("localhost:", "127.0.0.1:");
    }

    /** Client settings with only {@code bootstrap.servers}. */
    public Properties clientProps() {
        Properties props = new Properties();
        props.put(AdminClientConfig.BOOTSTRAP_SERVERS_CONFIG, bootstrapServers());
        return props;
    }

    /** Creates topics that do not exist yet, each with the given partitions and topic configs. */
    public void createTopics(List<String> names, int partitions, Map<String, String> configs)
            throws InterruptedException, ExecutionException {
        try (Admin admin = Admin.create(clientProps())) {
            List<NewTopic> topics = new ArrayList<>();
            for (String name : names) {
                topics.add(new NewTopic(name, partitions, (short) 1).configs(configs));
            }
            for (var entry : admin.createTopics(topics).values().entrySet()) {
                try {
                    entry.getValue().get(30, TimeUnit.SECONDS);
                } catch (ExecutionException e) {
                    if (!(e.getCause() instanceof TopicExistsException)) {
                        throw e;
                    }
                } catch (java.util.concurrent.TimeoutException e) {
                    throw new IllegalStateException("creating topic " + entry.getKey() + " timed out", e);
                }
            }
        }
    }

    @Override
    public void close() throws Exception {
        cluster.close();
    }
}
