package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import org.apache.kafka.clients.CommonClientConfigs;
import org.apache.kafka.clients.consumer.CommitFailedException;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.RebalanceInProgressException;
import org.apache.kafka.common.errors.RetriableException;
import org.apache.kafka.common.errors.WakeupException;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.pipeline.OutcomeCounts;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.service.BrokerWatch.Operation;
import org.oddswatch.ingest.service.OwnedPartition.Phase;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The poll loop of the service's one consumer, on one thread: the only user of the consumer and of
 * the pipelines (others read the {@link StatusBoard} snapshot). Per turn: poll; hand each record,
 * partition by partition in offset order, to its partition's pipeline; plan the rebuild of
 * partitions just assigned ({@link RebuildPlanner}) and make those re-read live; at most every
 * commit interval, store the outputs and commit; watch the broker ({@link BrokerWatch}); run the
 * timers ({@link LiveTimers}); publish the status (ingest/KAFKA.md, "Threads").
 *
 * <p>A commit waits (at most {@code brokerWait}) until every output sent so far is stored, then
 * commits per partition {@link OwnedPartition#nextCommit}, which never passes a held record; one
 * that meets a rebalance stays pending. Outputs lost to the producer are produced again by
 * rebuilding every partition from its last commit. Rebalance callbacks run inside poll and stay
 * short: on revoke, commit and release the pipelines; on lost, release them; on assign, open
 * pipelines, paused until their rebuild is planned. Only {@link #stop()} or an error that is not
 * the broker's ends the loop.
 */
final class PollLoop implements Runnable, ConsumerRebalanceListener {

    private static final Logger LOG = LoggerFactory.getLogger(PollLoop.class);
    private static final Duration POLL = Duration.ofMillis(100);
    private static final long STATUS_NANOS = 200_000_000L;
    /** How often outputs are stored and offsets committed (also on revoke and stop). */
    private static final long COMMIT_INTERVAL_NANOS = 500_000_000L;
    private static final Duration MAX_BROKER_WAIT = Duration.ofSeconds(5);

    private final MonitorConfig config;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaOutputPublisher publisher;
    private final PartitionPipelines pipelines;
    private final ServiceLoopMetrics meters;
    private final Map<TopicPartition, OwnedPartition> owned = new LinkedHashMap<>();
    private final OutcomeCounts counts = new OutcomeCounts();
    private final RebuildPlanner planner;
    private final Duration brokerWait;
    private final BrokerWatch broker;
    private final LiveTimers timers;
    private final StatusBoard status;
    private boolean assignedOnce;
    private boolean deferralLogged;
    private long lastCommitNanos = System.nanoTime();
    private long lastStatusNanos;
    /** Set by a commit: the next status snapshot is built at once, so it covers what was committed. */
    private boolean statusDue;
    private volatile boolean closing;

    /**
     * @param lookup a consumer without a group, for reading the record at a committed offset
     * @param readerProps properties of the consumers that read the published alerts and estimates back
     */
    PollLoop(MonitorConfig config, KafkaConsumer<byte[], byte[]> consumer, KafkaConsumer<byte[], byte[]> lookup,
             Properties readerProps, KafkaOutputPublisher publisher, PartitionPipelines pipelines,
             ServiceLoopMetrics meters) {
        this.config = config;
        this.consumer = consumer;
        this.publisher = publisher;
        this.pipelines = pipelines;
        this.meters = meters;
        // look-ups wait as long as the consumer's own calls (30 s unless given); storing and committing
        // at most 5 s per try, so an outage shows within seconds
        String apiTimeout = config.kafka().get(ConsumerConfig.DEFAULT_API_TIMEOUT_MS_CONFIG);
        Duration timeout = apiTimeout == null ? Duration.ofSeconds(30) : Duration.ofMillis(Long.parseLong(apiTimeout.trim()));
        this.brokerWait = timeout.compareTo(MAX_BROKER_WAIT) < 0 ? timeout : MAX_BROKER_WAIT;
        this.planner = new RebuildPlanner(config, consumer, lookup, readerProps, meters, timeout, pipelines.listener());
        this.broker = new BrokerWatch(consumer, owned,
                String.valueOf(config.kafka().get(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG)), brokerWait, timeout,
                COMMIT_INTERVAL_NANOS);
        this.timers = new LiveTimers(config.service().refresh(), config.service().idleTimeout());
        this.status = new StatusBoard(consumer, meters);
    }

    ServiceStatus snapshot() {
        return status.current();
    }

    /** Asks the loop to stop: it leaves poll at once, commits what is stored and ends. */
    void stop() {
        closing = true;
        try {
            consumer.wakeup();
        } catch (RuntimeException e) {
            LOG.debug("wakeup after the consumer closed: {}", e.getMessage());
        }
    }

    @Override
    public void run() {
        try {
            consumer.subscribe(new ArrayList<>(config.topics()), this);
            while (!closing) {
                long polling = System.nanoTime();
                ConsumerRecords<byte[], byte[]> records = consumer.poll(POLL);
                long applying = System.nanoTime();
                if (!records.isEmpty()) {
                    handle(records);
                    meters.polled(applying - polling, System.nanoTime() - applying);
                }
                long now = System.nanoTime();
                advanceLifeCycles(now);
                commitIfDue(now);
                boolean troubleChanged = broker.checkConnection(now, assignedOnce);
                timers.tick(owned.values(), now, broker.inputPaused());
                meters.ready(ready());
                if (statusDue || troubleChanged || now - lastStatusNanos >= STATUS_NANOS) {
                    publishStatus();
                }
            }
        } catch (WakeupException e) {
            if (!closing) {
                throw e;
            }
        } finally {
            closing = true;
            try {
                if (!owned.isEmpty() && publisher.storeFailure() == null) {
                    try {
                        commit(owned.keySet());
                    } catch (WakeupException e) {
                        commit(owned.keySet()); // stop()'s wake-up came after the last poll; it is used up now
                    }
                }
            } finally {
                status.stopped();
            }
        }
    }

    /** Every record of a poll to its partition's pipeline, partition by partition. */
    private void handle(ConsumerRecords<byte[], byte[]> records) {
        for (TopicPartition tp : records.partitions()) {
            OwnedPartition p = owned.get(tp);
            if (p == null || p.is(Phase.ASSIGNED)) {
                continue; // left, or sought back by its rebuild plan before its records are handled
            }
            long live = 0;
            long rebuilt = 0;
            long afterLastLive = -1;
            for (ConsumerRecord<byte[], byte[]> record : records.records(tp)) {
                boolean suppress = p.suppresses(record.offset());
                RecordOutcome outcome = p.offer(record, suppress, pipelines.listener());
                if (suppress) {
                    rebuilt++;
                } else {
                    counts.add(outcome);
                    live++;
                    afterLastLive = record.offset() + 1;
                }
            }
            p.pipeline.drainDecidedHeld(counts::add); // records held beyond the horizon, decided now
            p.handled(afterLastLive, p.pipeline.oldestHeldOffset());
            p.pipeline.batchDone();
            meters.handled(live, rebuilt);
        }
    }

    /** ASSIGNED partitions to REBUILDING once the broker answers the look-ups; REBUILDING ones to LIVE when done. */
    private void advanceLifeCycles(long now) {
        if (broker.due(Operation.REBUILD_LOOKUP, now)) {
            try {
                List<TopicPartition> planned = planner.planPending(owned.values(), now);
                if (!planned.isEmpty()) {
                    if (!broker.inputPaused()) {
                        consumer.resume(planned);
                    }
                    broker.succeeded(Operation.REBUILD_LOOKUP, "rebuild look-ups answered");
                    publishStatus();
                }
            } catch (RetriableException e) {
                broker.failed(Operation.REBUILD_LOOKUP, "rebuild look-ups failed: " + e);
                publishStatus();
            }
        }
        if (planner.finishDone(owned.values(), now)) {
            publishStatus();
        }
    }

    @Override
    public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
        assignedOnce = true;
        open(partitions);
    }

    /** New pipelines for {@code partitions}, paused until the loop has planned their rebuild. */
    private void open(Collection<TopicPartition> partitions) {
        for (TopicPartition tp : partitions) {
            owned.put(tp, new OwnedPartition(tp, pipelines.open(tp)));
        }
        consumer.pause(partitions);
        publishStatus();
    }

    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        try {
            if (publisher.storeFailure() == null && !commit(partitions)) {
                LOG.warn("partitions revoked before their last outputs were committed (the new owner produces the "
                        + "outputs since the last commit again, same keys and content): {}", partitions);
            }
        } catch (KafkaException e) {
            // A callback that throws would stop the poll; the hand-over goes on without this commit.
            LOG.warn("commit on revoke failed ({}): the new owner re-reads from the last commit", e.toString());
        } finally {
            drop(partitions);
        }
    }

    @Override
    public void onPartitionsLost(Collection<TopicPartition> partitions) {
        LOG.warn("partitions lost without a clean hand-over (their outputs since the last commit will be "
                + "produced again by the new owner): {}", partitions);
        drop(partitions);
    }

    /** The partitions leave: their pipelines are released (their streams' series leave /metrics). */
    private void drop(Collection<TopicPartition> partitions) {
        for (TopicPartition tp : partitions) {
            OwnedPartition p = owned.remove(tp);
            if (p != null) {
                timers.forget(p.pipeline);
                p.pipeline.release();
            }
        }
        publishStatus();
    }

    private void commitIfDue(long now) {
        Exception lost = publisher.storeFailure();
        if (lost != null) {
            rebuildFromCommits(lost);
        } else if (now - lastCommitNanos >= COMMIT_INTERVAL_NANOS && broker.due(Operation.COMMIT, now)) {
            commit(owned.keySet());
        }
    }

    /**
     * Stores the outputs and commits {@code partitions} (see the class comment).
     *
     * @return true when committed (or nothing to commit); false when left for a later try
     */
    private boolean commit(Collection<TopicPartition> partitions) {
        long start = System.nanoTime();
        if (!publisher.awaitStored(brokerWait)) {
            return commitFailed(publisher.pending() + " outputs not stored by the broker within " + brokerWait);
        }
        if (publisher.storeFailure() != null) {
            return false; // rebuilt from the last commit instead
        }
        Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
        for (TopicPartition tp : partitions) {
            OwnedPartition p = owned.get(tp);
            if (p != null && p.nextCommit > p.lastCommitted) {
                offsets.put(tp, new OffsetAndMetadata(p.nextCommit));
            }
        }
        if (!offsets.isEmpty()) {
            try {
                consumer.commitSync(offsets, brokerWait);
            } catch (RebalanceInProgressException | CommitFailedException e) {
                if (!deferralLogged) {
                    LOG.info("commit deferred until the group's rebalance completes: {}", e.getClass().getSimpleName());
                    deferralLogged = true;
                }
                return false;
            } catch (RetriableException e) {
                return commitFailed("commit failed: " + e);
            }
            deferralLogged = false;
            offsets.forEach((tp, om) -> owned.get(tp).lastCommitted = om.offset());
            statusDue = true; // /status never shows fewer records than the group has committed
        }
        broker.succeeded(Operation.COMMIT, "outputs stored and offsets committed");
        lastCommitNanos = System.nanoTime();
        meters.committed(lastCommitNanos - start);
        publishStatus();
        return true;
    }

    private boolean commitFailed(String reason) {
        broker.failed(Operation.COMMIT, reason);
        publishStatus();
        return false;
    }

    /** Outputs were lost: every partition is rebuilt from its last commit, producing them again. */
    private void rebuildFromCommits(Exception lost) {
        broker.failed(Operation.COMMIT, "outputs could not be stored: " + lost);
        if (!publisher.awaitStored(brokerWait)) {
            publishStatus();
            return; // every send outstanding ends before starting over
        }
        publisher.clearStoreFailure();
        LOG.warn("outputs could not be stored ({}); every partition is rebuilt from its last commit and its "
                + "outputs since then are produced again", lost.toString());
        List<TopicPartition> all = new ArrayList<>(owned.keySet());
        drop(all);
        open(all);
    }

    private boolean ready() {
        return assignedOnce && !closing && broker.trouble() == null && owned.values().stream().allMatch(p -> p.is(Phase.LIVE));
    }

    private void publishStatus() {
        String reason = broker.trouble();
        String state = ready() ? "ready" : closing ? "stopped" : reason != null ? "waiting-for-broker" : "rebuilding";
        status.publish(owned.values(), state, reason, counts);
        lastStatusNanos = System.nanoTime();
        statusDue = false;
    }
}
