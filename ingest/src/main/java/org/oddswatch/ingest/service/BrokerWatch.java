package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.EnumMap;
import java.util.Map;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.TopicPartition;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Watches the poll loop's broker operations. An {@link Operation} that fails is tried again with
 * backoff ({@link BrokerRetry}); meanwhile every owned partition is paused, the service is not ready
 * and {@link #trouble()} says why. Once nothing fails, the partitions with a rebuild plan are
 * resumed. No broker connection for {@code brokerWait} (at the start: twice the look-up timeout, at
 * most 10 s) is a failure too; at the start it is logged once as an error and input is not paused
 * (nothing is assigned). When a connection is back, the commit and the look-ups are tried at once.
 */
final class BrokerWatch {

    private static final Logger LOG = LoggerFactory.getLogger(BrokerWatch.class);
    private static final long MAX_START_WAIT_NANOS = 10_000_000_000L;
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
     * @param owned the loop's partitions (paused and resumed here, not changed)
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
            consumer.resume(owned.values().stream().filter(p -> !p.is(OwnedPartition.Phase.ASSIGNED))
                    .map(p -> p.partition).toList());
        }
    }

    /** Whether input is paused because a broker operation fails. */
    boolean inputPaused() {
        return inputPaused;
    }

    /** Why the broker is being waited for (the first failing operation), or null. */
    String trouble() {
        return retries.values().stream().filter(r -> r.failures > 0).map(r -> r.reason).findFirst().orElse(null);
    }

    /**
     * Checks the consumer's broker connections (its {@code connection-count} metric).
     *
     * @param assignedOnce whether partitions were ever assigned (else the start limit applies)
     * @return true when the trouble changed
     */
    boolean checkConnection(long nowNanos, boolean assignedOnce) {
        Double connections = consumer.metrics().entrySet().stream()
                .filter(e -> e.getKey().name().equals("connection-count") && e.getKey().group().equals("consumer-metrics"))
                .findFirst().map(e -> e.getValue().metricValue() instanceof Number n ? n.doubleValue() : null)
                .orElse(null);
        BrokerRetry connection = retries.get(Operation.CONNECTION);
        if (connections == null) {
            return false;
        } else if (connections > 0) {
            noConnectionSinceNanos = 0;
            if (connection.failures == 0) {
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
        if (nowNanos - noConnectionSinceNanos < (assignedOnce ? brokerWaitNanos : startWaitNanos) || connection.failures > 0) {
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

    /**
     * One kind of operation's run of failures, tried again with exponential backoff: after {@code n}
     * failures in a row the next try waits {@code min(max, first * 2^(n-1))}. One success ends the run.
     */
    static final class BrokerRetry {

        private final long firstNanos;
        private final long maxNanos;
        int failures;
        private long nextNanos;
        private long sinceNanos;
        /** Why the last try failed, or null when not failing. */
        String reason;

        BrokerRetry(long firstNanos, long maxNanos) {
            this.firstNanos = firstNanos;
            this.maxNanos = maxNanos;
        }

        /** Whether the operation may be tried at {@code nowNanos}: not failing, or its backoff has passed. */
        boolean due(long nowNanos) {
            return failures == 0 || nowNanos - nextNanos >= 0;
        }

        /** @return true for the first failure of a run (the caller logs it once) */
        boolean failed(String why, long nowNanos) {
            if (failures++ == 0) {
                sinceNanos = nowNanos;
            }
            long delay = firstNanos << Math.min(failures - 1, 20);
            nextNanos = nowNanos + Math.min(maxNanos, delay < 0 ? maxNanos : delay);
            reason = why;
            return failures == 1;
        }

        /** @return nanoseconds since the first failure of the run that just ended, or -1 when none failed */
        long succeeded(long nowNanos) {
            if (failures == 0) {
                return -1;
            }
            failures = 0;
            reason = null;
            return nowNanos - sinceNanos;
        }

        /** Makes a failing operation due at once (the broker answers again), keeping its run of failures. */
        void retryNow(long nowNanos) {
            nextNanos = nowNanos;
        }
    }
}
