package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Map;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.Metric;
import org.apache.kafka.common.MetricName;
import org.apache.kafka.common.TopicPartition;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Watches the poll loop's broker operations and its connection, and pauses input while any fails.
 * Each {@link Operation} that fails is tried again with exponential backoff ({@link BrokerRetry});
 * meanwhile every owned partition is paused (what would be applied only adds outputs that cannot be
 * stored), the service is not ready and {@link #trouble()} names the reason for {@code /status}. Once
 * no operation fails, the partitions with a rebuild plan are resumed.
 *
 * <p>The connection: while the consumer has no broker connection for {@code brokerWait} (at the
 * start: twice the look-up timeout, at most 10 s), that is a failure too. At the start it is logged
 * once as an error and retried quietly (input is not paused: nothing is assigned yet). When a
 * connection is back, the commit and the look-ups waiting for the broker are tried at once, not after
 * their backoff.
 */
final class BrokerWatch {

    private static final Logger LOG = LoggerFactory.getLogger(BrokerWatch.class);
    /** Longest wait at the start for a broker connection before the loop says the broker is unreachable. */
    private static final long MAX_START_WAIT_NANOS = 10_000_000_000L;
    /** Longest backoff between tries of a failing broker operation. */
    private static final long MAX_BACKOFF_NANOS = 30_000_000_000L;

    /** The broker operations of the poll loop, in the order {@link #trouble()} reports them. */
    enum Operation { CONNECTION, COMMIT, REBUILD_LOOKUP }

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final Map<TopicPartition, OwnedPartition> owned;
    private final Map<Operation, BrokerRetry> retries = new EnumMap<>(Operation.class);
    private final String bootstrapServers;
    private final long brokerWaitNanos;
    private final long startWaitNanos;
    private boolean inputPaused;
    private boolean startWarned;
    private long noConnectionSinceNanos;

    /**
     * @param owned the loop's partitions (read, not changed: paused and resumed as a whole)
     * @param firstBackoffNanos the first wait before a failed operation is tried again
     */
    BrokerWatch(KafkaConsumer<byte[], byte[]> consumer, Map<TopicPartition, OwnedPartition> owned,
                String bootstrapServers, Duration brokerWait, Duration lookupTimeout, long firstBackoffNanos) {
        this.consumer = consumer;
        this.owned = owned;
        this.bootstrapServers = bootstrapServers;
        this.brokerWaitNanos = brokerWait.toNanos();
        this.startWaitNanos = Math.min(MAX_START_WAIT_NANOS, 2 * lookupTimeout.toNanos());
        for (Operation op : Operation.values()) {
            retries.put(op, new BrokerRetry(firstBackoffNanos, MAX_BACKOFF_NANOS));
        }
    }

    /** Whether {@code op} may be tried now: it is not failing, or its backoff has passed. */
    boolean due(Operation op, long nowNanos) {
        return retries.get(op).due(nowNanos);
    }

    /** {@code op} failed: tried again after its backoff; input paused meanwhile. */
    void failed(Operation op, String reason) {
        if (retries.get(op).failed(reason, System.nanoTime())) {
            LOG.warn("Kafka broker not available ({}); input paused, retrying with backoff, /health not ready", reason);
        }
        if (!inputPaused) {
            inputPaused = true;
            consumer.pause(owned.keySet());
        }
    }

    /** {@code op} succeeded: once nothing fails, the planned partitions are resumed. */
    void succeeded(Operation op, String what) {
        long nanos = retries.get(op).succeeded(System.nanoTime());
        if (nanos >= 0) {
            LOG.info("Kafka broker available again after {} ms: {}", nanos / 1_000_000, what);
        }
        if (inputPaused && trouble() == null) {
            inputPaused = false;
            List<TopicPartition> planned = new ArrayList<>();
            for (OwnedPartition p : owned.values()) {
                if (!p.is(OwnedPartition.Phase.ASSIGNED)) {
                    planned.add(p.partition);
                }
            }
            consumer.resume(planned);
        }
    }

    /** Whether input is paused because a broker operation fails. */
    boolean inputPaused() {
        return inputPaused;
    }

    /** Why the broker is being waited for (the first failing operation), or null. */
    String trouble() {
        for (BrokerRetry retry : retries.values()) {
            if (retry.failing()) {
                return retry.reason();
            }
        }
        return null;
    }

    /**
     * Checks the consumer's broker connections (see the class comment).
     *
     * @param assignedOnce whether partitions were ever assigned (else the longer start limit applies)
     * @return true when the trouble changed (the status should show it now)
     */
    boolean checkConnection(long nowNanos, boolean assignedOnce) {
        Double connections = connectionCount();
        if (connections == null) {
            return false;
        }
        BrokerRetry connection = retries.get(Operation.CONNECTION);
        if (connections > 0) {
            noConnectionSinceNanos = 0;
            if (!connection.failing()) {
                return false;
            }
            retries.get(Operation.COMMIT).retryNow(nowNanos);
            retries.get(Operation.REBUILD_LOOKUP).retryNow(nowNanos);
            succeeded(Operation.CONNECTION, "connected to " + bootstrapServers);
            return true;
        }
        if (noConnectionSinceNanos == 0) {
            noConnectionSinceNanos = nowNanos;
        }
        long limit = assignedOnce ? brokerWaitNanos : startWaitNanos;
        if (nowNanos - noConnectionSinceNanos < limit || connection.failing()) {
            return false;
        }
        String reason = "no connection to any Kafka broker at " + bootstrapServers + " for "
                + (nowNanos - noConnectionSinceNanos) / 1_000_000_000L + " s";
        if (!assignedOnce && !startWarned) {
            startWarned = true;
            LOG.error("{}; retrying quietly in the background, /health stays not ready until it answers", reason);
            connection.failed(reason, nowNanos);
        } else {
            failed(Operation.CONNECTION, reason);
        }
        return true;
    }

    /** The consumer's {@code connection-count} metric, or null when the client has none. */
    private Double connectionCount() {
        for (Map.Entry<MetricName, ? extends Metric> e : consumer.metrics().entrySet()) {
            if (e.getKey().name().equals("connection-count") && e.getKey().group().equals("consumer-metrics")) {
                Object value = e.getValue().metricValue();
                return value instanceof Number n ? n.doubleValue() : null;
            }
        }
        return null;
    }
}
