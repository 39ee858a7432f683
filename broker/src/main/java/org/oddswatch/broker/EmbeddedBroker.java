package org.oddswatch.broker;

import java.io.IOException;
import java.lang.reflect.Field;
import java.net.InetAddress;
import java.net.ServerSocket;
import java.nio.channels.ServerSocketChannel;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.TreeSet;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.apache.kafka.clients.admin.AdminClientConfig;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.common.errors.TopicExistsException;
import org.apache.kafka.common.test.KafkaClusterTestKit;
import org.apache.kafka.common.test.PreboundSocketFactoryManager;
import org.apache.kafka.common.test.TestKitNodes;

/**
 * A single-node Kafka cluster inside this process, for the sandbox and for the Kafka tests: one node
 * acting as KRaft controller and broker, from Kafka's own test kit ({@link KafkaClusterTestKit}),
 * internal topics with replication factor 1, no time-based retention (records carry simulated, past
 * event times as timestamps), data in a temporary directory deleted on close.
 *
 * <p>Both ports, the client listener and the controller's quorum listener, are bound to 127.0.0.1
 * only. The test kit reserves a port up front, on the wildcard address, for each of its two
 * listener names ({@code EXTERNAL} for clients, {@code CONTROLLER}) and hands that socket to the
 * node whatever {@code listeners} says; it opens a socket of its own, on the listener's configured
 * host, for a listener it reserved nothing for, and for one whose reserved socket has been closed
 * (then on the reserved port). So the client listener is named {@code LOOPBACK} (bound as
 * configured: 127.0.0.1 and a fixed port, chosen up front when 0 is asked for, so that
 * {@link #restartBroker()} comes back on the same port), and before start-up the reserved sockets
 * are closed ({@link #bindToLoopback}): the controller binds 127.0.0.1 on its reserved port, and
 * nothing listens on the wildcard address.
 *
 * <p>Storage formatting reports one line per data directory on standard output ("Formatting ...");
 * the kit offers no setting for that stream, and the lines are left as they are.
 */
public final class EmbeddedBroker implements AutoCloseable {

    static final String CLIENT_LISTENER = "LOOPBACK";

    private final KafkaClusterTestKit cluster;
    private final int port;

    private EmbeddedBroker(KafkaClusterTestKit cluster, int port) {
        this.cluster = cluster;
        this.port = port;
    }

    /**
     * Formats storage, starts the node and waits until the broker is ready.
     *
     * @param port client port on 127.0.0.1, 0 for any free port
     */
    public static EmbeddedBroker start(int port) throws Exception {
        return start(port, Map.of());
    }

    /**
     * As {@link #start(int)}, with further broker settings (they replace the defaults of the same name).
     *
     * @param brokerSettings broker configuration, for instance {@code group.initial.rebalance.delay.ms}
     */
    public static EmbeddedBroker start(int port, Map<String, String> brokerSettings) throws Exception {
        int clientPort = port == 0 ? freeLoopbackPort() : port;
        TestKitNodes nodes = new TestKitNodes.Builder()
                .setCombined(true)
                .setNumBrokerNodes(1)
                .setNumControllerNodes(1)
                .build();
        KafkaClusterTestKit.Builder builder = new KafkaClusterTestKit.Builder(nodes)
                // The client listener has a name of its own, so the kit reserves no socket for it and
                // the node binds exactly 127.0.0.1:port (see the class comment).
                .setConfigProp("listeners", CLIENT_LISTENER + "://127.0.0.1:" + clientPort + ",CONTROLLER://127.0.0.1:0")
                .setConfigProp("listener.security.protocol.map", CLIENT_LISTENER + ":PLAINTEXT,CONTROLLER:PLAINTEXT")
                .setConfigProp("inter.broker.listener.name", CLIENT_LISTENER)
                .setConfigProp("offsets.topic.replication.factor", "1")
                .setConfigProp("offsets.topic.num.partitions", "1")
                .setConfigProp("transaction.state.log.replication.factor", "1")
                .setConfigProp("transaction.state.log.min.isr", "1")
                .setConfigProp("group.initial.rebalance.delay.ms", "0")
                .setConfigProp("auto.create.topics.enable", "false")
                .setConfigProp("log.retention.ms", "-1")
                .setConfigProp("num.partitions", "1");
        brokerSettings.forEach(builder::setConfigProp);
        KafkaClusterTestKit cluster = builder.build();
        try {
            bindToLoopback(cluster);
            cluster.format();
            cluster.startup();
            cluster.waitForReadyBrokers();
        } catch (Exception e) {
            cluster.close();
            throw e;
        }
        return new EmbeddedBroker(cluster, clientPort);
    }

    /** A port free on 127.0.0.1 at the call (the broker binds it a moment later). */
    private static int freeLoopbackPort() throws IOException {
        try (ServerSocket socket = new ServerSocket(0, 1, InetAddress.getLoopbackAddress())) {
            return socket.getLocalPort();
        }
    }

    /**
     * Closes the sockets the test kit reserved on the wildcard address for every listener of every
     * node, so that start-up binds each listener on its configured host (127.0.0.1) and the same
     * port instead. The kit keeps them in a private field; no public setting reaches them.
     */
    static void bindToLoopback(KafkaClusterTestKit cluster) throws ReflectiveOperationException, IOException {
        Field field = KafkaClusterTestKit.class.getDeclaredField("socketFactoryManager");
        field.setAccessible(true);
        PreboundSocketFactoryManager sockets = (PreboundSocketFactoryManager) field.get(cluster);
        TestKitNodes nodes = cluster.nodes();
        Set<Integer> ids = new TreeSet<>(nodes.brokerNodes().keySet());
        ids.addAll(nodes.controllerNodes().keySet());
        for (int id : ids) {
            for (String listener : List.of(nodes.brokerListenerName().value(), nodes.controllerListenerName().value())) {
                ServerSocketChannel reserved = sockets.getSocketForListenerAndMarkAsUsed(id, listener);
                if (reserved != null) {
                    reserved.close();
                }
            }
        }
    }

    /** The {@code bootstrap.servers} value for any Kafka client on this machine. */
    public String bootstrapServers() {
        return "127.0.0.1:" + port;
    }

    /** The test kit's cluster (for tests that look at the nodes). */
    KafkaClusterTestKit cluster() {
        return cluster;
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
                } catch (TimeoutException e) {
                    throw new IllegalStateException("creating topic " + entry.getKey() + " timed out", e);
                }
            }
        }
    }

    /**
     * Shuts the broker down (the controller keeps running): clients lose every connection and the
     * client port refuses them until {@link #restartBroker()}. Data and committed offsets are kept.
     */
    public void stopBroker() {
        cluster.brokers().values().forEach(b -> b.shutdown());
    }

    /** Starts the broker stopped by {@link #stopBroker()} again on the same port and waits until it is ready. */
    public void restartBroker() throws InterruptedException, ExecutionException {
        cluster.brokers().values().forEach(b -> b.startup());
        cluster.waitForReadyBrokers();
    }

    @Override
    public void close() throws Exception {
        cluster.close();
    }
}
