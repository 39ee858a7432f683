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
import org.apache.kafka.clients.consumer.ConsumerRebalanceListener;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.consumer.OffsetAndTimestamp;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.WakeupException;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
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
 * partition is sought back and resumed.
 */
final class PollLoop implements Runnable, ConsumerRebalanceListener {

    private static final Logger LOG = LoggerFactory.getLogger(PollLoop.class);
    private static final Duration POLL = Duration.ofMillis(100);
    private static final long SNAPSHOT_NANOS = 200_000_000L;
    private static final long IDLE_CHECK_NANOS = 1_000_000_000L;
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
        this.timeout = Duration.ofSeconds(30);
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
                planPendingRebuilds();
                noteProcessedPositions(records);
                finishRebuilds();
                if (System.nanoTime() - lastCommitNanos >= commitIntervalNanos) {
                    flushAndCommit(states.keySet());
                }
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
                    if (!states.isEmpty()) {
                        flushAndCommit(states.keySet());
                    }
                } finally {
                    worker.close();
                    snapshot = snapshot.stopped();
                }
            }
        }
    }

    // ---- records ---------------------------------------------------------------------------

    /**
     * One partition's records of a poll, each read (parsed and decoded) or the error reading it
     * raised; the first {@code readHere} on this thread, the rest on the worker; and the consumer
     * position after them.
     */
    private record PartitionBatch(PartitionState state, byte[][] values, long[] offsets,
                                  MonitorPipeline.ReadRecord[] read, RuntimeException[] failed, int readHere,
                                  long positionAfter) {
    }

    /**
     * Reads the first part of the records of planned partitions with each partition's reader (the
     * worker reads the rest before applying them: see {@link ReadShare}). This runs while the worker
     * still applies the previous batch: reading needs no stream state.
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
            MonitorPipeline.ReadRecord[] read = new MonitorPipeline.ReadRecord[n];
            RuntimeException[] failed = new RuntimeException[n];
            int here = readShare.of(n);
            readRange(state.reader, values, 0, here, read, failed);
            batch.add(new PartitionBatch(state, values, offsets, read, failed, here, consumer.position(tp)));
        }
        return batch;
    }

    /**
     * Reads records {@code [from, to)} into {@code read}, or their error into {@code failed}, with
     * one parser for the range.
     */
    private static void readRange(MonitorPipeline.RecordReader reader, byte[][] values, int from, int to,
                                  MonitorPipeline.ReadRecord[] read, RuntimeException[] failed) {
        if (from < to) {
            reader.readAll(java.util.Arrays.asList(values).subList(from, to), read, failed, from);
        }
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
            if (state.workerReader == null) {
                // Made here, so its buffers sit in this thread's memory, away from the poll thread's.
                state.workerReader = state.pipeline.newReader();
            }
            readRange(state.workerReader, values, part.readHere(), values.length, part.read(), part.failed());
            long live = 0;
            long rebuilt = 0;
            long nextCommit = -1;
            for (int i = 0; i < values.length; i++) {
                long offset = offsets[i];
                boolean suppress = offset < state.rebuildUntil;
                byte[] value = values[i];
                RecordOrigin origin = RecordOrigin.kafka(tp.topic(), tp.partition(), offset);
                RecordOutcome outcome;
                RuntimeException failed = part.failed()[i];
                if (failed != null) {
                    outcome = pipelineFailed(state, value, origin, suppress, failed);
                } else {
                    try {
                        outcome = state.pipeline.offerRead(part.read()[i], value, origin, suppress);
                    } catch (KafkaOutputPublisher.OutputFailedException e) {
                        throw e;
                    } catch (RuntimeException e) {
                        outcome = pipelineFailed(state, value, origin, suppress, e);
                    }
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
            if (nextCommit >= 0) {
                state.nextCommit = nextCommit;
            }
            state.pipeline.drainDecidedHeld(counts::add); // records held beyond the horizon, decided now
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

    private void flushAndCommit(Collection<TopicPartition> partitions) {
        publisher.flush();
        Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
        for (TopicPartition tp : partitions) {
            PartitionState state = states.get(tp);
            if (state != null && state.nextCommit > state.lastCommitted) {
                offsets.put(tp, new OffsetAndMetadata(state.nextCommit));
            }
        }
        if (!offsets.isEmpty()) {
            consumer.commitSync(offsets, timeout);
            offsets.forEach((tp, om) -> states.get(tp).lastCommitted = om.offset());
            snapshot = buildSnapshot();
        }
        lastCommitNanos = System.nanoTime();
    }

    // ---- rebalance -------------------------------------------------------------------------

    @Override
    public void onPartitionsRevoked(Collection<TopicPartition> partitions) {
        worker.await(); // the batch in flight may hold records of these partitions
        try {
            flushAndCommit(partitions);
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
        restoreAlerts(pending);

        Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(tps, timeout);
        Map<TopicPartition, Long> beginning = consumer.beginningOffsets(tps, timeout);
        Map<TopicPartition, Long> end = consumer.endOffsets(tps, timeout);
        Map<TopicPartition, Long> startTimes = new HashMap<>();
        for (PartitionState state : pending) {
            TopicPartition tp = state.partition;
            OffsetAndMetadata c = committed.get(tp);
            long until;
            Long recordMillis;
            if (c != null) {
                until = c.offset();
                recordMillis = recordTimestamp(tp, until, beginning.get(tp), end.get(tp));
            } else if (resetToLatest) {
                until = end.get(tp);
                recordMillis = wallClockMillis.getAsLong();
            } else {
                until = beginning.get(tp);
                recordMillis = null;
            }
            state.rebuildUntil = until;
            state.rebuildStartedNanos = started;
            LOG.info("rebuild plan {}: committed {}, partition [{}, {}), record time {}", tp, c == null ? null : c.offset(),
                    beginning.get(tp), end.get(tp), recordMillis == null ? null : java.time.Instant.ofEpochMilli(recordMillis));
            if (recordMillis == null || until <= beginning.get(tp)) {
                consumer.seek(tp, until);
            } else {
                startTimes.put(tp, Math.max(0, spans.get(tp.topic()).startMillis(recordMillis)));
            }
        }
        if (!startTimes.isEmpty()) {
            Map<TopicPartition, OffsetAndTimestamp> found = consumer.offsetsForTimes(startTimes, timeout);
            for (Map.Entry<TopicPartition, Long> e : startTimes.entrySet()) {
                TopicPartition tp = e.getKey();
                PartitionState state = states.get(tp);
                OffsetAndTimestamp at = found.get(tp);
                long from = at == null ? state.rebuildUntil : Math.min(at.offset(), state.rebuildUntil);
                consumer.seek(tp, Math.max(from, beginning.get(tp)));
                LOG.info("rebuilding {} from offset {} to {} ({})", tp, from, state.rebuildUntil, spans.get(tp.topic()));
            }
        }
        for (PartitionState state : pending) {
            state.planned = true;
        }
        consumer.resume(tps);
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
        throw new IllegalStateException("could not read the record at " + tp + "@" + target + " within " + timeout);
    }

    private void restoreAlerts(List<PartitionState> pending) {
        Set<String> alertTopics = new HashSet<>();
        for (PartitionState state : pending) {
            for (MonitorDefinition monitor : config.monitorsFor(state.partition.topic())) {
                alertTopics.add(monitor.outputs().alertsTopic());
            }
        }
        List<Alert> published = archive.read(alertTopics);
        for (PartitionState state : pending) {
            List<Alert> mine = new ArrayList<>();
            for (Alert alert : published) {
                if (belongsTo(alert.stream(), config.monitorsFor(state.partition.topic()))) {
                    mine.add(alert);
                }
            }
            state.pipeline.restoreAlerts(mine);
        }
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

    private boolean ready() {
        if (!assignedOnce || closing) {
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
        if (refresh != null && !refresh.isZero() && now - lastRefreshNanos >= refresh.toNanos()) {
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
        return new ServiceStatus(ready() ? "ready" : (closing ? "stopped" : "rebuilding"), counts.snapshot(),
                partitions, inputs);
    }
}
