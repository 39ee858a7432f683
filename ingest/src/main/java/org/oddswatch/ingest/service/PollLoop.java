package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import java.util.Set;
import java.util.function.LongSupplier;
import org.apache.kafka.clients.CommonClientConfigs;
import org.apache.kafka.clients.consumer.CommitFailedException;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.consumer.OffsetAndTimestamp;
import org.apache.kafka.common.KafkaException;
import org.apache.kafka.common.Metric;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.RebalanceInProgressException;
import org.apache.kafka.common.errors.RetriableException;
import org.apache.kafka.common.errors.TimeoutException;
import org.apache.kafka.common.errors.WakeupException;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.pipeline.CusumHistory;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.OutcomeCounts;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The one poll-loop thread of one consumer, with one {@link BatchWorker} beside it. Only this
 * thread uses the consumer. It reads (parses and decodes, which needs no stream state) the records
 * of a poll while the worker applies the previous batch to the pipelines (routing, time rules,
 * dedupe, windows, fits, outputs); then it waits for that batch and hands over the new one. It
 * touches pipeline state (commits, timers, rebalances, status) only after the wait, so the state is
 * used by one thread at a time and records are applied in poll order: the results are those of a
 * single thread. Other threads see only the {@link ServiceStatus} snapshot it publishes.
 *
 * <p>Per iteration: poll; read the records; wait for the previous batch; at most every
 * {@code commitInterval}, flush the producer and then commit the offsets after the last live record
 * applied of each partition synchronously; emit interim estimates on the refresh interval; move
 * quiet streams' watermarks on after the idle timeout; hand the new batch to the worker (records
 * below the rebuild offset are applied with output suppressed). The rebalance callbacks first wait
 * for the batch in flight (at most one batch of in-memory work).
 *
 * <p>Rebalances: on revoke the producer is flushed and the revoked partitions' offsets committed,
 * then their pipelines are dropped. On assign a fresh pipeline is created per partition and the
 * partition paused; the blocking look-ups of the rebuild (committed offsets, the committed record's
 * timestamp, offsets for times, the published alerts) run in the loop, not in the callback; then the
 * partition is sought back and resumed. A commit that meets a rebalance in progress
 * ({@link RebalanceInProgressException}, {@link CommitFailedException}) is kept and tried again
 * after the next poll has completed the rebalance; partitions that leave are committed in
 * {@link #onPartitionsRevoked}, so a join or a leave neither loses nor repeats applied work.
 *
 * <p>Broker outages: every blocking broker call is bounded ({@code brokerWait} for storing outputs
 * and committing, the consumer's {@code default.api.timeout.ms} for the rebuild look-ups). A call
 * that fails or times out is tried again with exponential backoff ({@link BrokerRetry}); meanwhile
 * input is paused (outputs not yet stored wait in the producer, which does not expire them), the
 * service is not ready and {@code /status} names the reason. Outputs lost to the producer
 * ({@link KafkaOutputPublisher#storeFailure()}) are produced again by rebuilding every partition from
 * its last commit. Nothing but {@link #stop()} or an error that is not the broker's ends the loop.
 */
final class PollLoop implements Runnable, ConsumerRebalanceListener {

    private static final Logger LOG = LoggerFactory.getLogger(PollLoop.class);
    private static final Duration POLL = Duration.ofMillis(100);
    private static final long SNAPSHOT_NANOS = 200_000_000L;
    private static final long IDLE_CHECK_NANOS = 1_000_000_000L;
    /** Longest wait at the start for a broker connection before the loop says the broker is unreachable. */
    private static final long MAX_START_WAIT_NANOS = 10_000_000_000L;
    /** Longest wait for outputs to be stored and for a commit, per try. */
    private static final Duration MAX_BROKER_WAIT = Duration.ofSeconds(5);
    /** Longest backoff between tries of a failing broker operation. */
    private static final long MAX_BACKOFF_NANOS = 30_000_000_000L;
    /** Reason code of records the pipeline failed on (see {@link #pipelineFailed}). */
    static final String PIPELINE_ERROR = "pipeline-error";

    private final MonitorConfig config;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaConsumer<byte[], byte[]> lookup;
    private final KafkaOutputPublisher publisher;
    private final PipelineFactory pipelines;
    private final AlertArchive archive;
    private final ServiceMeters meters;
    private final BatchWorker worker;
    private final ReadShare readShare = new ReadShare();
    private final Duration timeout;
    private final Duration brokerWait;
    private final BrokerRetry commitRetry;
    private final BrokerRetry planRetry;
    private final BrokerRetry connectionRetry;
    private final String bootstrapServers;
    private boolean startWarned;
    private boolean inputPaused;
    private boolean commitDeferredLogged;
    private long noConnectionSinceNanos;
    private final long commitIntervalNanos;
    private final boolean resetToLatest;
    private final LongSupplier wallClockMillis;
    private final Map<String, RebuildSpan> spans = new HashMap<>();

    private final Map<TopicPartition, PartitionState> states = new LinkedHashMap<>();
    private final Map<String, long[]> streamActivity = new HashMap<>();
    private final Set<String> splitStreamsWarned = new HashSet<>();
    private final OutcomeCounts counts = new OutcomeCounts();
    private boolean assignedOnce;
    private long lastCommitNanos = System.nanoTime();
    private long lastRefreshNanos = System.nanoTime();
    private long lastSnapshotNanos;
    private long lastIdleCheckNanos;
    private volatile boolean closing;
    private volatile ServiceStatus snapshot = ServiceStatus.starting();

    /** Creates a partition's pipeline; the service passes the publisher as listener. */
    interface PipelineFactory {
        MonitorPipeline create(TopicPartition partition);
    }

    PollLoop(MonitorConfig config, KafkaConsumer<byte[], byte[]> consumer, KafkaConsumer<byte[], byte[]> lookup,
             KafkaOutputPublisher publisher, PipelineFactory pipelines, AlertArchive archive, ServiceMeters meters,
             Duration commitInterval, boolean resetToLatest, LongSupplier wallClockMillis, BatchWorker worker) {
        this.config = config;
        this.consumer = consumer;
        this.lookup = lookup;
        this.publisher = publisher;
        this.pipelines = pipelines;
        this.archive = archive;
        this.meters = meters;
        this.worker = worker;
        // The consumer's own bound on blocking calls (30 s unless given): rebuild look-ups; storing
        // outputs and committing wait at most 5 s per try, so an outage shows within seconds.
        String apiTimeout = config.kafka().get(ConsumerConfig.DEFAULT_API_TIMEOUT_MS_CONFIG);
        this.timeout = apiTimeout == null ? Duration.ofSeconds(30) : Duration.ofMillis(Long.parseLong(apiTimeout.trim()));
        this.brokerWait = timeout.compareTo(MAX_BROKER_WAIT) < 0 ? timeout : MAX_BROKER_WAIT;
        long firstBackoff = Math.max(commitInterval.toNanos(), 100_000_000L);
        this.commitRetry = new BrokerRetry(firstBackoff, MAX_BACKOFF_NANOS);
        this.planRetry = new BrokerRetry(firstBackoff, MAX_BACKOFF_NANOS);
        this.connectionRetry = new BrokerRetry(firstBackoff, MAX_BACKOFF_NANOS);
        this.bootstrapServers = String.valueOf(config.kafka().get(CommonClientConfigs.BOOTSTRAP_SERVERS_CONFIG));
        this.commitIntervalNanos = commitInterval.toNanos();
        this.resetToLatest = resetToLatest;
        this.wallClockMillis = wallClockMillis;
        for (String topic : config.topics()) {
            spans.put(topic, RebuildSpan.of(config.monitorsFor(topic), config.service().rebuildMargin()));
        }
    }

    ServiceStatus snapshot() {
        return snapshot;
    }

    /** Asks the loop to stop: it leaves poll at once, commits what is flushed and closes. */
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
                // The worker runs the previous batch through the pipelines while this polls.
                long polling = System.nanoTime();
                ConsumerRecords<byte[], byte[]> records = consumer.poll(POLL);
                long reading = System.nanoTime();
                List<PartitionBatch> batch = read(records);
                long waiting = System.nanoTime();
                boolean hadBatch = worker.hasBatch();
                boolean waited = worker.await();
                if (hadBatch) {
                    readShare.adjust(waited);
                }
                if (!records.isEmpty()) {
                    meters.pollTurn(reading - polling, waiting - reading, System.nanoTime() - waiting);
                }
                long now = System.nanoTime();
                if (planRetry.due(now)) {
                    planPendingRebuilds();
                }
                noteProcessedPositions(records);
                finishRebuilds();
                Exception lost = publisher.storeFailure();
                if (lost != null) {
                    rebuildFromCommits(lost);
                } else if (now - lastCommitNanos >= commitIntervalNanos && commitRetry.due(now)) {
                    flushAndCommit(states.keySet());
                }
                checkConnection(now);
                tick();
                submit(batch);
            }
        } catch (WakeupException e) {
            if (!closing) {
                throw e;
            }
        } finally {
            closing = true;
            try {
                worker.await();
            } finally {
                try {
                    if (!states.isEmpty() && publisher.storeFailure() == null) {
                        try {
                            flushAndCommit(states.keySet());
                        } catch (WakeupException e) {
                            // stop() woke the consumer up after its last poll: the wake-up is used
                            // up now, so the last commit can be made.
                            flushAndCommit(states.keySet());
                        }
                    }
                } finally {
                    worker.close();
                    snapshot = snapshot.stopped();
                }
            }
        }
    }

    // ---- records ---------------------------------------------------------------------------

    /** One partition's records of a poll, and the consumer position after them. */
    private record PartitionBatch(PartitionState state, byte[][] values, long[] offsets, long positionAfter) {
    }

    /**
     * Takes the records of planned partitions out of a poll; the worker parses and applies them
     * ({@link MonitorPipeline#offer}), in poll order.
     */
    private List<PartitionBatch> read(ConsumerRecords<byte[], byte[]> records) {
        List<PartitionBatch> batch = new ArrayList<>();
        for (TopicPartition tp : records.partitions()) {
            PartitionState state = states.get(tp);
            if (state == null || !state.planned) {
                continue;
            }
            // Values and offsets are taken out here, where the records were just made, so the
            // worker reads two arrays instead of records allocated on this thread.
            List<ConsumerRecord<byte[], byte[]>> list = records.records(tp);
            int n = list.size();
            byte[][] values = new byte[n][];
            long[] offsets = new long[n];
            for (int i = 0; i < n; i++) {
                ConsumerRecord<byte[], byte[]> record = list.get(i);
                values[i] = record.value() == null ? NO_BYTES : record.value();
                offsets[i] = record.offset();
            }
            batch.add(new PartitionBatch(state, values, offsets, consumer.position(tp)));
        }
        return batch;
    }

    /** The value of a record without one (a tombstone): read as empty, so it is rejected as such. */
    private static final byte[] NO_BYTES = new byte[0];

    /** Hands a read batch to the worker (nothing when it is empty). */
    private void submit(List<PartitionBatch> batch) {
        if (!batch.isEmpty()) {
            worker.submit(() -> process(batch));
        }
    }

    /**
     * A rebuilding partition without records in this poll has been processed up to its position
     * (the batch before has been awaited); one with records gets there when its batch is done.
     */
    private void noteProcessedPositions(ConsumerRecords<byte[], byte[]> records) {
        for (PartitionState state : states.values()) {
            if (state.planned && state.rebuildStartedNanos != 0 && records.records(state.partition).isEmpty()) {
                state.processedPosition = consumer.position(state.partition);
            }
        }
    }

    /** Runs on the worker: every record to its partition's pipeline (suppressed below the rebuild offset). */
    private void process(List<PartitionBatch> batch) {
        long start = System.nanoTime();
        for (PartitionBatch part : batch) {
            PartitionState state = part.state();
            TopicPartition tp = state.partition;
            byte[][] values = part.values();
            long[] offsets = part.offsets();
            long live = 0;
            long rebuilt = 0;
            long nextCommit = -1;
            for (int i = 0; i < values.length; i++) {
                long offset = offsets[i];
                boolean suppress = offset < state.rebuildUntil;
                byte[] value = values[i];
                RecordOrigin origin = RecordOrigin.kafka(tp.topic(), tp.partition(), offset);
                RecordOutcome outcome;
                try {
                    outcome = state.pipeline.offer(value, origin, suppress);
                } catch (RuntimeException e) {
                    outcome = pipelineFailed(state, value, origin, suppress, e);
                }
                if (suppress) {
                    rebuilt++;
                } else {
                    counts.add(outcome);
                    live++;
                    nextCommit = offset + 1;
                }
            }
            // The partition's fields are written once per batch, not per record: the poll thread
            // reads objects allocated next to them.
            state.pipeline.drainDecidedHeld(counts::add); // records held beyond the horizon, decided now
            // no commit past a record still held beyond its stream's horizon (it is in no window yet)
            long held = state.pipeline.oldestHeldOffset();
            if (held != Long.MAX_VALUE && held > state.lastCommitted) {
                nextCommit = nextCommit < 0 ? held : Math.min(nextCommit, held);
            } else if (held != Long.MAX_VALUE) {
                nextCommit = -1;
            }
            if (nextCommit >= 0) {
                state.nextCommit = nextCommit;
            }
            state.pipeline.batchDone();
            state.rebuiltRecords += rebuilt;
            meters.rebuildRecords(rebuilt);
            meters.liveRecords(live);
            state.processedPosition = part.positionAfter();
        }
        meters.applied(System.nanoTime() - start);
    }

    /**
     * A record the pipeline failed on (a defect, not bad input: bad input has its reason codes) is
     * logged, sent to rejects as {@code pipeline-error} and counted, so one record cannot stop the
     * service or, after a restart, stop it again.
     */
    private RecordOutcome pipelineFailed(PartitionState state, byte[] value, RecordOrigin origin, boolean suppress,
                                         RuntimeException e) {
        LOG.error("the pipeline failed on {}-{}@{}; the record goes to rejects as {}", origin.topic(),
                origin.partition(), origin.offset(), PIPELINE_ERROR, e);
        RecordOutcome outcome = RecordOutcome.rejected(PIPELINE_ERROR, String.valueOf(e));
        if (!suppress) {
            publisher.onReject(new RejectedRecord(null, null, Outcome.REJECTED, PIPELINE_ERROR, String.valueOf(e),
                    origin, value));
        }
        return outcome;
    }

    /**
     * Waits (at most {@code brokerWait}) until every output sent so far is stored, then commits the
     * offsets after the last live record applied of each of {@code partitions}.
     *
     * @return true when committed (or nothing to commit); false when the commit is left for a later
     *     try: outputs not stored yet or lost (then nothing is committed), a rebalance in progress
     *     (tried again after the next poll), or the broker not answering (backoff, input paused)
     */
    private boolean flushAndCommit(Collection<TopicPartition> partitions) {
        if (!publisher.awaitStored(brokerWait)) {
            brokerFailed(commitRetry, publisher.pending() + " outputs not stored by the broker within " + brokerWait);
            return false;
        }
        if (publisher.storeFailure() != null) {
            return false;
        }
        Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
        for (TopicPartition tp : partitions) {
            PartitionState state = states.get(tp);
            if (state != null && state.nextCommit > state.lastCommitted) {
                offsets.put(tp, new OffsetAndMetadata(state.nextCommit));
            }
        }
        if (!offsets.isEmpty()) {
            try {
                consumer.commitSync(offsets, brokerWait);
            } catch (RebalanceInProgressException | CommitFailedException e) {
                // The group is rebalancing (or has just moved on a generation): the offsets stay
                // pending. The next poll completes the rebalance; partitions that leave this
                // instance are committed in onPartitionsRevoked, the others on the next try.
                if (!commitDeferredLogged) {
                    LOG.info("commit deferred until the group's rebalance completes: {}", e.getClass().getSimpleName());
                    commitDeferredLogged = true;
                }
                return false;
            } catch (RetriableException e) {
                brokerFailed(commitRetry, "commit failed: " + e);
                return false;
            }
            commitDeferredLogged = false;
            offsets.forEach((tp, om) -> states.get(tp).lastCommitted = om.offset());
        }
        brokerRecovered(commitRetry, "outputs stored and offsets committed");
        lastCommitNanos = System.nanoTime();
        snapshot = buildSnapshot();
        return true;
    }

    /**
     * A broker operation failed: it is tried again after its backoff; meanwhile input is paused (what
     * is applied only adds outputs that cannot be stored) and the service is not ready.
     */
    private void brokerFailed(BrokerRetry retry, String reason) {
        if (retry.failed(reason, System.nanoTime())) {
            LOG.warn("Kafka broker not available ({}); input paused, retrying with backoff, /health not ready", reason);
        }
        pauseInput();
        snapshot = buildSnapshot();
    }

    private void brokerRecovered(BrokerRetry retry, String what) {
        long nanos = retry.succeeded(System.nanoTime());
        if (nanos >= 0) {
            LOG.info("Kafka broker available again after {} ms: {}", nanos / 1_000_000, what);
        }
        if (inputPaused && !commitRetry.failing() && !planRetry.failing() && !connectionRetry.failing()) {
            inputPaused = false;
            List<TopicPartition> live = new ArrayList<>();
            for (PartitionState state : states.values()) {
                if (state.planned) {
                    live.add(state.partition);
                }
            }
            consumer.resume(live);
        }
    }

    private void pauseInput() {
        if (!inputPaused) {
            inputPaused = true;
            consumer.pause(states.keySet());
        }
    }

    /**
     * Outputs were lost to the producer (an error other than the record's own, see
     * {@link KafkaOutputPublisher}): every partition gets a fresh pipeline and is rebuilt from its
     * last commit, which produces the outputs since then again (same keys, same content).
     */
    private void rebuildFromCommits(Exception lost) {
        brokerFailed(commitRetry, "outputs could not be stored: " + lost);
        if (!publisher.awaitStored(brokerWait)) {
            return; // wait for every send outstanding to end before starting over
        }
        LOG.warn("outputs could not be stored ({}); every partition is rebuilt from its last commit and its "
                + "outputs since then are produced again", lost.toString());
        publisher.clearStoreFailure();
        List<TopicPartition> all = new ArrayList<>(states.keySet());
        drop(all);
        for (TopicPartition tp : all) {
            states.put(tp, new PartitionState(tp, pipelines.create(tp)));
        }
        consumer.pause(all);
        snapshot = buildSnapshot();
    }

    /**
     * Whether the consumer has any broker connection: while it has none for {@code brokerWait}
     * (at the start: twice the look-up timeout, at most 10 s) the service is not ready, and one line says so.
     */
    private void checkConnection(long now) {
        Double connections = connectionCount();
        if (connections == null) {
            return;
        }
        if (connections > 0) {
            noConnectionSinceNanos = 0;
            if (connectionRetry.failing()) {
                // The broker answers again: what waits for it is tried at once, not after its backoff.
                commitRetry.retryNow(now);
                planRetry.retryNow(now);
                brokerRecovered(connectionRetry, "connected to " + bootstrapServers);
            }
            return;
        }
        if (noConnectionSinceNanos == 0) {
            noConnectionSinceNanos = now;
        }
        long limit = assignedOnce ? brokerWait.toNanos() : Math.min(MAX_START_WAIT_NANOS, 2 * timeout.toNanos());
        if (now - noConnectionSinceNanos >= limit && !connectionRetry.failing()) {
            String reason = "no connection to any Kafka broker at " + bootstrapServers + " for "
                    + (now - noConnectionSinceNanos) / 1_000_000_000L + " s";
            if (!assignedOnce && !startWarned) {
                startWarned = true;
                LOG.error("{}; retrying quietly in the background, /health stays not ready until it answers", reason);
                connectionRetry.failed(reason, now);
                snapshot = buildSnapshot();
            } else {
                brokerFailed(connectionRetry, reason);
            }
        }
    }

    /** The consumer's {@code connection-count} metric, or null when the client has none. */
    private Double connectionCount() {
        for (Map.Entry<org.apache.kafka.common.MetricName, ? extends Metric> e : consumer.metrics().entrySet()) {
            if (e.getKey().name().equals("connection-count") && e.getKey().group().equals("consumer-metrics")) {
                Object value = e.getValue().metricValue();
                return value instanceof Number n ? n.doubleValue() : null;
            }
        }
        return null;
    }

    // ---- rebalance -------------------------------------------------------------------------

    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        worker.await(); // the batch in flight may hold records of these partitions
        try {
            if (publisher.storeFailure() == null && !flushAndCommit(partitions)) {
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
        worker.await();
        LOG.warn("partitions lost without a clean hand-over (their outputs since the last commit will be "
                + "produced again by the new owner): {}", partitions);
        drop(partitions);
    }

    @Override
    public void onPartitionsAssigned(Collection<TopicPartition> partitions) {
        worker.await(); // the status snapshot below reads every pipeline
        assignedOnce = true;
        for (TopicPartition tp : partitions) {
            states.put(tp, new PartitionState(tp, pipelines.create(tp)));
        }
        // No records for these until their rebuild position is set in the loop.
        consumer.pause(partitions);
        snapshot = buildSnapshot();
    }

    private void drop(Collection<TopicPartition> partitions) {
        for (TopicPartition tp : partitions) {
            PartitionState state = states.remove(tp);
            if (state != null) {
                for (String stream : state.pipeline.streams()) {
                    streamActivity.remove(stream);
                }
                state.pipeline.release(); // the streams' series leave /metrics with them
            }
        }
        snapshot = buildSnapshot();
    }

    // ---- rebuild ---------------------------------------------------------------------------

    /**
     * Plans the rebuild of newly assigned partitions. Every look-up (alerts published, committed
     * offsets, partition bounds, the committed record's time, offsets for times) is made before any
     * state changes, so a look-up that fails (the broker away) leaves the partitions paused and
     * unplanned, to be tried again after a backoff.
     */
    private void planPendingRebuilds() {
        List<PartitionState> pending = new ArrayList<>();
        for (PartitionState state : states.values()) {
            if (!state.planned) {
                pending.add(state);
            }
        }
        if (pending.isEmpty()) {
            return;
        }
        long started = System.nanoTime();
        Set<TopicPartition> tps = new HashSet<>();
        pending.forEach(s -> tps.add(s.partition));
        Map<TopicPartition, Long> until = new HashMap<>();
        Map<TopicPartition, Long> seekTo = new HashMap<>();
        Map<PartitionState, List<Alert>> alerts;
        CusumHistory charts;
        Map<TopicPartition, Long> startTimes = new HashMap<>();
        try {
            alerts = publishedAlerts(pending);
            charts = publishedCharts(pending);
            Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(tps, timeout);
            Map<TopicPartition, Long> beginning = consumer.beginningOffsets(tps, timeout);
            Map<TopicPartition, Long> end = consumer.endOffsets(tps, timeout);
            for (PartitionState state : pending) {
                TopicPartition tp = state.partition;
                OffsetAndMetadata c = committed.get(tp);
                long upTo;
                Long recordMillis;
                if (c != null) {
                    upTo = c.offset();
                    recordMillis = recordTimestamp(tp, upTo, beginning.get(tp), end.get(tp));
                } else if (resetToLatest) {
                    upTo = end.get(tp);
                    recordMillis = wallClockMillis.getAsLong();
                } else {
                    upTo = beginning.get(tp);
                    recordMillis = null;
                }
                until.put(tp, upTo);
                LOG.info("rebuild plan {}: committed {}, partition [{}, {}), record time {}", tp,
                        c == null ? null : c.offset(), beginning.get(tp), end.get(tp),
                        recordMillis == null ? null : java.time.Instant.ofEpochMilli(recordMillis));
                if (recordMillis == null || upTo <= beginning.get(tp)) {
                    seekTo.put(tp, upTo);
                } else {
                    startTimes.put(tp, Math.max(0, spans.get(tp.topic()).startMillis(recordMillis)));
                }
            }
            if (!startTimes.isEmpty()) {
                Map<TopicPartition, OffsetAndTimestamp> found = consumer.offsetsForTimes(startTimes, timeout);
                for (TopicPartition tp : startTimes.keySet()) {
                    OffsetAndTimestamp at = found.get(tp);
                    long from = at == null ? until.get(tp) : Math.min(at.offset(), until.get(tp));
                    seekTo.put(tp, Math.max(from, beginning.get(tp)));
                    LOG.info("rebuilding {} from offset {} to {} ({})", tp, from, until.get(tp), spans.get(tp.topic()));
                }
            }
        } catch (RetriableException e) {
            brokerFailed(planRetry, "rebuild look-ups failed: " + e);
            return;
        }
        for (PartitionState state : pending) {
            TopicPartition tp = state.partition;
            state.pipeline.restoreAlerts(alerts.get(state));
            Long rereadFrom = startTimes.get(tp);
            if (rereadFrom != null) {
                // events at or after the re-read's start time are re-read (record time >= event time);
                // charts of streams with a baseline file continue from a published window after it
                state.pipeline.resumeCharts(charts, rereadFrom);
            }
            state.rebuildUntil = until.get(tp);
            state.rebuildStartedNanos = started;
            consumer.seek(tp, seekTo.get(tp));
            state.planned = true;
        }
        if (!inputPaused) {
            consumer.resume(tps);
        }
        brokerRecovered(planRetry, "rebuild look-ups answered");
        meters.rebuildStarted(pending.size());
        snapshot = buildSnapshot();
    }

    /**
     * Timestamp of the record at {@code offset}, or of the one before it when {@code offset} is the
     * end of the partition; null when the partition holds neither.
     */
    private Long recordTimestamp(TopicPartition tp, long offset, long beginning, long end) {
        long target = offset < end ? offset : offset - 1;
        if (target < beginning || target >= end) {
            return null;
        }
        lookup.assign(List.of(tp));
        lookup.seek(tp, target);
        long deadline = System.nanoTime() + timeout.toNanos();
        while (System.nanoTime() < deadline) {
            for (ConsumerRecord<byte[], byte[]> r : lookup.poll(POLL).records(tp)) {
                if (r.offset() >= target) {
                    return r.timestamp();
                }
            }
        }
        throw new TimeoutException("could not read the record at " + tp + "@" + target + " within " + timeout);
    }

    /** The CUSUM values published with the final estimates of the pending partitions' monitors. */
    private CusumHistory publishedCharts(List<PartitionState> pending) {
        Set<String> estimatesTopics = new HashSet<>();
        for (PartitionState state : pending) {
            for (MonitorDefinition monitor : config.monitorsFor(state.partition.topic())) {
                if (monitor.rules() == null || monitor.rules().cusum() != null) {
                    estimatesTopics.add(monitor.outputs().estimatesTopic());
                }
            }
        }
        return estimatesTopics.isEmpty() ? new CusumHistory() : archive.readCharts(estimatesTopics);
    }

    /** The published alerts of each pending partition's monitors (read before any state changes). */
    private Map<PartitionState, List<Alert>> publishedAlerts(List<PartitionState> pending) {
        Set<String> alertTopics = new HashSet<>();
        for (PartitionState state : pending) {
            for (MonitorDefinition monitor : config.monitorsFor(state.partition.topic())) {
                alertTopics.add(monitor.outputs().alertsTopic());
            }
        }
        List<Alert> published = archive.read(alertTopics);
        Map<PartitionState, List<Alert>> out = new HashMap<>();
        for (PartitionState state : pending) {
            List<Alert> mine = new ArrayList<>();
            for (Alert alert : published) {
                if (belongsTo(alert.stream(), config.monitorsFor(state.partition.topic()))) {
                    mine.add(alert);
                }
            }
            out.put(state, mine);
        }
        return out;
    }

    private static boolean belongsTo(String stream, List<MonitorDefinition> monitors) {
        for (MonitorDefinition monitor : monitors) {
            if (stream.equals(monitor.name()) || stream.startsWith(monitor.name() + "/")) {
                return true;
            }
        }
        return false;
    }

    private void finishRebuilds() {
        for (PartitionState state : states.values()) {
            if (state.planned && state.rebuildStartedNanos != 0 && state.processedPosition >= state.rebuildUntil) {
                long nanos = System.nanoTime() - state.rebuildStartedNanos;
                LOG.info("{} rebuilt: {} records re-read in {} ms", state.partition, state.rebuiltRecords, nanos / 1_000_000);
                meters.rebuildFinished(nanos);
                state.rebuildStartedNanos = 0;
            }
        }
    }

    /** Why the broker is being waited for (the first failing operation), or null. */
    private String brokerTrouble() {
        for (BrokerRetry retry : List.of(connectionRetry, commitRetry, planRetry)) {
            if (retry.failing()) {
                return retry.reason();
            }
        }
        return null;
    }

    private boolean ready() {
        if (!assignedOnce || closing || brokerTrouble() != null) {
            return false;
        }
        for (PartitionState state : states.values()) {
            if (!state.planned || state.rebuildStartedNanos != 0) {
                return false;
            }
        }
        return true;
    }

    // ---- timers ----------------------------------------------------------------------------

    private void tick() {
        long now = System.nanoTime();
        Duration refresh = config.service().refresh();
        if (refresh != null && !refresh.isZero() && now - lastRefreshNanos >= refresh.toNanos() && !inputPaused) {
            for (PartitionState state : states.values()) {
                if (live(state)) {
                    state.pipeline.emitInterim();
                }
            }
            lastRefreshNanos = now;
        }
        moveQuietStreams(now);
        meters.ready(ready());
        if (now - lastSnapshotNanos >= SNAPSHOT_NANOS) {
            snapshot = buildSnapshot();
            lastSnapshotNanos = now;
        }
    }

    private boolean live(PartitionState state) {
        return state.planned && state.rebuildStartedNanos == 0;
    }

    /**
     * Idle timeout (live only): a stream whose watermark has not moved for {@code idleTimeout} of
     * wall-clock time gets its watermark moved to the wall clock, closing its windows up to there.
     */
    private void moveQuietStreams(long nowNanos) {
        Duration idle = config.service().idleTimeout();
        if (idle == null || idle.isZero() || nowNanos - lastIdleCheckNanos < IDLE_CHECK_NANOS) {
            return;
        }
        lastIdleCheckNanos = nowNanos;
        for (PartitionState state : states.values()) {
            if (!live(state)) {
                continue;
            }
            for (StreamStatus stream : state.pipeline.snapshot().streams()) {
                if (stream.watermark() == null) {
                    continue;
                }
                long watermark = stream.watermark().toEpochMilli();
                long[] activity = streamActivity.computeIfAbsent(stream.stream(), s -> new long[] {watermark, nowNanos});
                if (activity[0] != watermark) {
                    activity[0] = watermark;
                    activity[1] = nowNanos;
                } else if (nowNanos - activity[1] >= idle.toNanos()) {
                    long wall = wallClockMillis.getAsLong();
                    if (wall > watermark) {
                        LOG.info("stream {} idle for {}: watermark moved to the wall clock", stream.stream(), idle);
                        state.pipeline.advanceWatermark(stream.stream(), wall);
                        activity[0] = wall;
                    }
                    activity[1] = nowNanos;
                }
            }
        }
    }

    // ---- status ----------------------------------------------------------------------------

    private ServiceStatus buildSnapshot() {
        List<ServiceStatus.PartitionStatus> partitions = new ArrayList<>();
        List<PipelineSnapshot> inputs = new ArrayList<>();
        Map<String, TopicPartition> owners = new HashMap<>();
        for (PartitionState state : states.values()) {
            Long lag = null;
            if (state.planned) {
                OptionalLong l = consumer.currentLag(state.partition);
                lag = l.isPresent() ? l.getAsLong() : null;
            }
            partitions.add(new ServiceStatus.PartitionStatus(state.partition.topic(), state.partition.partition(),
                    !live(state), state.lastCommitted < 0 ? null : state.lastCommitted, lag));
            PipelineSnapshot pipeline = state.pipeline.snapshot();
            inputs.add(pipeline);
            for (StreamStatus stream : pipeline.streams()) {
                TopicPartition other = owners.putIfAbsent(stream.stream(), state.partition);
                if (other != null && splitStreamsWarned.add(stream.stream())) {
                    LOG.warn("stream {} receives events from {} and {}: each partition estimates it separately. "
                            + "Key the records by the split value (or use one partition) so a stream lives on one "
                            + "partition.", stream.stream(), other, state.partition);
                }
            }
        }
        meters.monitoringGaps(inputs);
        String reason = brokerTrouble();
        String state = ready() ? "ready" : closing ? "stopped" : reason != null ? "waiting-for-broker" : "rebuilding";
        return new ServiceStatus(state, reason, counts.snapshot(), partitions, inputs);
    }
}
