package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.LongSupplier;
import org.apache.kafka.clients.CommonClientConfigs;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.TopicPartition;
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
 * the pipelines (other threads see only the {@link StatusBoard} snapshot). Shaped like Kafka's own
 * consumer examples; per turn: poll; hand each record, partition by partition in offset order, to
 * its partition's pipeline (output suppressed below the rebuild end); plan the rebuild of partitions
 * just assigned ({@link RebuildPlanner}) and make those whose re-read is done live (the life cycle
 * {@code ASSIGNED -> REBUILDING -> LIVE} of {@link OwnedPartition}); at most every
 * {@code commitInterval}, commit what is done ({@link OffsetCommitter}); watch the broker
 * ({@link BrokerWatch}); run the timers ({@link LiveTimers}); publish the status.
 *
 * <p>Rebalance callbacks run inside poll, never while records are applied, and stay short: on
 * revoke, commit what is applied and release the pipelines; on lost, release them; on assign, make
 * the pipelines and pause the partitions until the loop plans their rebuild. A commit that meets a
 * rebalance in progress is tried again after the next poll, so a join or a leave neither loses nor
 * repeats applied work. Outputs lost to the producer are produced again by rebuilding every
 * partition from its last commit. Nothing but {@link #stop()} or an error that is not the broker's
 * ends the loop.
 */
final class PollLoop implements Runnable, ConsumerRebalanceListener {

    private static final Logger LOG = LoggerFactory.getLogger(PollLoop.class);
    private static final Duration POLL = Duration.ofMillis(100);
    private static final long STATUS_NANOS = 200_000_000L;
    /** Longest wait for outputs to be stored and for a commit, per try. */
    private static final Duration MAX_BROKER_WAIT = Duration.ofSeconds(5);

    private final MonitorConfig config;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaOutputPublisher publisher;
    private final PartitionPipelines pipelines;
    private final ServiceLoopMetrics meters;
    private final Map<TopicPartition, OwnedPartition> owned = new LinkedHashMap<>();
    private final OutcomeCounts counts = new OutcomeCounts();
    private final RebuildPlanner planner;
    private final OffsetCommitter committer;
    private final BrokerWatch broker;
    private final LiveTimers timers;
    private final StatusBoard status;
    private final long commitIntervalNanos;
    private boolean assignedOnce;
    private long lastCommitNanos = System.nanoTime();
    private long lastStatusNanos;
    private volatile boolean closing;

    /**
     * @param lookup a consumer without a group, for reading the record at a committed offset
     * @param commitInterval how often outputs are flushed and offsets committed (also on revoke and stop)
     * @param wallClockMillis the wall clock: idle timeout and an empty-group start at "latest" only
     */
    PollLoop(MonitorConfig config, KafkaConsumer<byte[], byte[]> consumer, KafkaConsumer<byte[], byte[]> lookup,
             KafkaOutputPublisher publisher, PartitionPipelines pipelines, AlertArchive archive,
             ServiceLoopMetrics meters, Duration commitInterval, boolean resetToLatest, LongSupplier wallClockMillis) {
        this.config = config;
        this.consumer = consumer;
        this.publisher = publisher;
        this.pipelines = pipelines;
        this.meters = meters;
        // The consumer's own bound on blocking calls (30 s unless given) for the rebuild look-ups;
        // storing outputs and committing wait at most 5 s per try, so an outage shows within seconds.
        String apiTimeout = config.kafka().get(ConsumerConfig.DEFAULT_API_TIMEOUT_MS_CONFIG);
        Duration timeout = apiTimeout == null ? Duration.ofSeconds(30) : Duration.ofMillis(Long.parseLong(apiTimeout.trim()));
        Duration brokerWait = timeout.compareTo(MAX_BROKER_WAIT) < 0 ? timeout : MAX_BROKER_WAIT;
        this.planner = new RebuildPlanner(config, consumer, lookup, archive, meters, timeout, resetToLatest,
                wallClockMillis);
        this.committer = new OffsetCommitter(consumer, publisher, brokerWait);
        this.broker = new BrokerWatch(consumer, owned,
                String.valueOf(config.kafka().get(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG)), brokerWait, timeout,
                Math.max(commitInterval.toNanos(), 100_000_000L));
        this.timers = new LiveTimers(config.service().refresh(), config.service().idleTimeout(), wallClockMillis);
        this.status = new StatusBoard(consumer, meters);
        this.commitIntervalNanos = commitInterval.toNanos();
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
                if (broker.checkConnection(now, assignedOnce)) {
                    publishStatus();
                }
                timers.tick(owned.values(), now, broker.inputPaused());
                meters.ready(ready());
                if (now - lastStatusNanos >= STATUS_NANOS) {
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
                if (!owned.isEmpty() && committer.outputsLost() == null) {
                    try {
                        commit(owned.keySet());
                    } catch (WakeupException e) {
                        // stop() woke the consumer up after its last poll: the wake-up is used up
                        // now, so the last commit can be made.
                        commit(owned.keySet());
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
        for (TopicPartition tp : partitions) {
            owned.put(tp, new OwnedPartition(tp, pipelines.open(tp)));
        }
        consumer.pause(partitions); // no records until the loop has planned the rebuild
        publishStatus();
    }

    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        try {
            if (committer.outputsLost() == null && !commit(partitions)) {
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
        Exception lost = committer.outputsLost();
        if (lost != null) {
            rebuildFromCommits(lost);
        } else if (now - lastCommitNanos >= commitIntervalNanos && broker.due(Operation.COMMIT, now)) {
            commit(owned.keySet());
        }
    }

    /** @return true when committed (or nothing to commit); false when left for a later try */
    private boolean commit(Collection<TopicPartition> partitions) {
        long start = System.nanoTime();
        OffsetCommitter.Result result = committer.commit(owned, partitions);
        if (result.brokerTrouble() != null) {
            broker.failed(Operation.COMMIT, result.brokerTrouble());
            publishStatus();
        } else if (result.committed()) {
            broker.succeeded(Operation.COMMIT, "outputs stored and offsets committed");
            lastCommitNanos = System.nanoTime();
            meters.committed(lastCommitNanos - start);
            publishStatus();
        }
        return result.committed();
    }

    /**
     * Outputs were lost to the producer (an error other than the record's own): every partition gets
     * a fresh pipeline and is rebuilt from its last commit, which produces the outputs since then
     * again (same keys, same content).
     */
    private void rebuildFromCommits(Exception lost) {
        broker.failed(Operation.COMMIT, "outputs could not be stored: " + lost);
        if (!committer.settleLostOutputs()) {
            publishStatus();
            return; // every send outstanding ends before starting over
        }
        LOG.warn("outputs could not be stored ({}); every partition is rebuilt from its last commit and its "
                + "outputs since then are produced again", lost.toString());
        List<TopicPartition> all = new ArrayList<>(owned.keySet());
        drop(all);
        for (TopicPartition tp : all) {
            owned.put(tp, new OwnedPartition(tp, pipelines.open(tp)));
        }
        consumer.pause(all);
        publishStatus();
    }

    private boolean ready() {
        if (!assignedOnce || closing || broker.trouble() != null) {
            return false;
        }
        return owned.values().stream().allMatch(p -> p.is(Phase.LIVE));
    }

    private void publishStatus() {
        String reason = broker.trouble();
        boolean ready = ready();
        String state = ready ? "ready" : closing ? "stopped" : reason != null ? "waiting-for-broker" : "rebuilding";
        status.publish(owned.values(), state, reason, counts);
        lastStatusNanos = System.nanoTime();
    }
}
