package org.oddswatch.ingest.service;

import java.io.IOException;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.TreeSet;
import java.util.function.Consumer;
import java.util.stream.Collectors;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.clients.consumer.OffsetAndTimestamp;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.TimeoutException;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.alerts.live.RecentFinals;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.kafka.BoundedTopicReader;
import org.oddswatch.ingest.pipeline.CusumHistory;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Plans the rebuild of newly assigned partitions, the steps of ingest/KAFKA.md "State rebuild": the
 * committed offset {@code C} (none: the beginning, or the end with {@code auto.offset.reset=latest}),
 * the timestamp {@code T} of the record there (before it, at the end), a seek to the first offset
 * at or after {@link RebuildSpan#startMillis}{@code (T)}, and a re-read up to {@code C} with output
 * suppressed; before it each pipeline gets its monitors' published alerts (open episodes go on) and
 * the CUSUM values published with the final estimates; when its rebuild is done, the live page gets
 * the newest final estimates of the streams it holds. Both come from one read of the estimates
 * topics, bounded in time ({@link #publishedFinals}). Every look-up is made before any state
 * changes, so a failed one (a {@link org.apache.kafka.common.errors.RetriableException}) leaves the
 * partitions paused and {@code ASSIGNED}. Runs on the poll-loop thread, never in a rebalance callback.
 */
final class RebuildPlanner {

    private static final Logger LOG = LoggerFactory.getLogger(RebuildPlanner.class);
    private static final Duration LOOKUP_POLL = Duration.ofMillis(100);

    private final MonitorConfig config;
    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaConsumer<byte[], byte[]> lookup;
    private final Properties readerProps;
    private final ServiceLoopMetrics meters;
    private final Duration timeout;
    private final boolean resetToLatest;
    private final Map<String, RebuildSpan> spans = new HashMap<>();
    private final PipelineListener restored;

    /**
     * @param lookup a consumer of its own (no group) that reads the record at a committed offset
     * @param readerProps properties of the consumers that read the published alerts and estimates
     * @param timeout bound of each blocking look-up
     * @param restored where the final estimates read back go ({@link PipelineListener#onEstimateRestored})
     */
    RebuildPlanner(MonitorConfig config, KafkaConsumer<byte[], byte[]> consumer, KafkaConsumer<byte[], byte[]> lookup,
                   Properties readerProps, ServiceLoopMetrics meters, Duration timeout, PipelineListener restored) {
        this.restored = restored;
        this.config = config;
        this.consumer = consumer;
        this.lookup = lookup;
        this.readerProps = readerProps;
        this.meters = meters;
        this.timeout = timeout;
        this.resetToLatest = "latest".equalsIgnoreCase(config.kafka().get(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG));
        for (String topic : config.topics()) {
            spans.put(topic, RebuildSpan.of(config.monitorsFor(topic), config.service().rebuildMargin()));
        }
    }

    /**
     * Plans the {@code ASSIGNED} partitions of {@code owned} (see the class comment) and makes them
     * {@code REBUILDING}; they stay paused for the caller to resume.
     *
     * @return the partitions planned
     * @throws org.apache.kafka.common.errors.RetriableException when a look-up failed; nothing changed
     */
    List<TopicPartition> planPending(Collection<OwnedPartition> owned, long nowNanos) {
        List<OwnedPartition> pending = owned.stream().filter(p -> p.is(OwnedPartition.Phase.ASSIGNED)).toList();
        if (pending.isEmpty()) {
            return List.of();
        }
        Set<TopicPartition> tps = pending.stream().map(p -> p.partition).collect(Collectors.toSet());
        Map<OwnedPartition, List<Alert>> alerts = publishedAlerts(pending);
        Map<TopicPartition, OffsetAndMetadata> committed = consumer.committed(tps, timeout);
        Map<TopicPartition, Long> beginning = consumer.beginningOffsets(tps, timeout);
        Map<TopicPartition, Long> end = consumer.endOffsets(tps, timeout);
        Map<TopicPartition, Long> until = new HashMap<>();
        Map<TopicPartition, Long> startTimes = new HashMap<>();
        for (TopicPartition tp : tps) {
            OffsetAndMetadata c = committed.get(tp);
            long upTo = c != null ? c.offset() : resetToLatest ? end.get(tp) : beginning.get(tp);
            Long recordMillis = c != null ? recordTimestamp(tp, upTo, beginning.get(tp), end.get(tp))
                    : resetToLatest ? Long.valueOf(System.currentTimeMillis()) : null; // latest: the wall clock as T
            until.put(tp, upTo);
            LOG.info("rebuild plan {}: committed {}, partition [{}, {}), record time {}", tp,
                    c == null ? null : c.offset(), beginning.get(tp), end.get(tp),
                    recordMillis == null ? null : Instant.ofEpochMilli(recordMillis));
            if (recordMillis != null && upTo > beginning.get(tp)) {
                startTimes.put(tp, Math.max(0, spans.get(tp.topic()).startMillis(recordMillis)));
            }
        }
        Map<TopicPartition, OffsetAndTimestamp> found = startTimes.isEmpty() ? Map.of()
                : consumer.offsetsForTimes(startTimes, timeout);
        CusumHistory charts = new CusumHistory();
        RecentFinals finals = publishedFinals(pending, startTimes, charts);
        for (OwnedPartition p : pending) { // every look-up answered: only now does state change
            TopicPartition tp = p.partition;
            p.finals = finals;
            long seekTo = until.get(tp);
            p.pipeline.restoreAlerts(alerts.get(p));
            if (startTimes.containsKey(tp)) {
                OffsetAndTimestamp at = found.get(tp);
                long from = at == null ? seekTo : Math.min(at.offset(), seekTo);
                LOG.info("rebuilding {} from offset {} to {} ({})", tp, from, seekTo, spans.get(tp.topic()));
                seekTo = Math.max(from, beginning.get(tp));
                p.pipeline.resumeCharts(charts, startTimes.get(tp)); // charts with a baseline file go on from there
            }
            consumer.seek(tp, seekTo);
            p.rebuildPlanned(until.get(tp), nowNanos);
        }
        meters.rebuildStarted(pending.size());
        return new ArrayList<>(tps);
    }

    /** Makes {@code LIVE} the {@code REBUILDING} partitions whose position reached the rebuild end; true if any. */
    boolean finishDone(Collection<OwnedPartition> owned, long nowNanos) {
        boolean any = false;
        for (OwnedPartition p : owned) {
            if (p.is(OwnedPartition.Phase.REBUILDING)) {
                long nanos = p.reachedRebuildEnd(consumer.position(p.partition), nowNanos);
                if (nanos >= 0) {
                    LOG.info("{} rebuilt: {} records re-read in {} ms", p.partition,
                            p.pipeline.snapshot().rebuilt(), nanos / 1_000_000);
                    meters.rebuildFinished(nanos);
                    for (String stream : p.pipeline.streams()) {
                        p.finals.of(stream).forEach(f -> restored.onEstimateRestored(f.estimate(), f.json()));
                    }
                    p.finals = null;
                    any = true;
                }
            }
        }
        return any;
    }

    /** Timestamp of the record at {@code offset} (or before it, at the end); null when there is none. */
    private Long recordTimestamp(TopicPartition tp, long offset, long beginning, long end) {
        long target = offset < end ? offset : offset - 1;
        if (target < beginning || target >= end) {
            return null;
        }
        lookup.assign(List.of(tp));
        lookup.seek(tp, target);
        long deadline = System.nanoTime() + timeout.toNanos();
        while (System.nanoTime() < deadline) {
            for (ConsumerRecord<byte[], byte[]> r : lookup.poll(LOOKUP_POLL).records(tp)) {
                if (r.offset() >= target) {
                    return r.timestamp();
                }
            }
        }
        throw new TimeoutException("could not read the record at " + tp + "@" + target + " within " + timeout);
    }

    /** The published alerts of each pending partition's monitors. */
    private Map<OwnedPartition, List<Alert>> publishedAlerts(List<OwnedPartition> pending) {
        Set<String> topics = new TreeSet<>();
        pending.forEach(p -> config.monitorsFor(p.partition.topic()).forEach(m -> topics.add(m.outputs().alertsTopic())));
        List<Alert> published = new ArrayList<>();
        readBack(topics, null, r -> {
            try {
                published.add(Json.mapper().readValue(r.value(), Alert.class));
            } catch (IOException | RuntimeException e) {
                LOG.warn("skipping unreadable alert at {}-{}@{}: {}", r.topic(), r.partition(), r.offset(), e.getMessage());
            }
        });
        Map<OwnedPartition, List<Alert>> out = new HashMap<>();
        for (OwnedPartition p : pending) {
            List<MonitorDefinition> monitors = config.monitorsFor(p.partition.topic());
            out.put(p, published.stream().filter(a -> monitors.stream().anyMatch(m -> m.owns(a.stream()))).toList());
        }
        return out;
    }

    /**
     * One read of the pending partitions' monitors' estimates topics, from the first record stamped at
     * or after {@code B = min over partitions (S - W x step)}: {@code S} the re-read start
     * ({@link RebuildSpan#startMillis}, at most {@code T - look-back}), {@code W} = {@link LiveHistory#WINDOWS},
     * {@code step} the monitors' longest; none when no partition has a record time. An estimate is
     * published after its window's events arrive, so with records stamped at or after their event time
     * every window ending at or after {@code B} is read. The CUSUM values go to {@code charts}: a chart
     * resumes only from a window ending at or after {@code S + width}, so exactly as from the whole
     * topic (a stream with no final window since then starts at 0 at {@code S}, as before); of the
     * published readings that bring the episode runs forward, those before {@code B} count only for an
     * open CUSUM episode whose stream published fewer than {@code clearAfter} final windows in the
     * {@code W} steps before {@code S} (its clearing can come later, never earlier; a raise takes one
     * reading). Returned: the newest {@code W} final windows per stream, for the live page.
     */
    private RecentFinals publishedFinals(List<OwnedPartition> pending, Map<TopicPartition, Long> startTimes,
                                         CusumHistory charts) {
        List<MonitorDefinition> monitors = pending.stream()
                .flatMap(p -> config.monitorsFor(p.partition.topic()).stream()).distinct().toList();
        RecentFinals finals = new RecentFinals(stream -> monitors.stream().anyMatch(m -> m.owns(stream)));
        long from = Long.MAX_VALUE;
        for (Map.Entry<TopicPartition, Long> t : startTimes.entrySet()) {
            long step = config.monitorsFor(t.getKey().topic()).stream().mapToLong(m -> m.window().step().toMillis())
                    .max().orElse(0);
            from = Math.min(from, t.getValue() - LiveHistory.WINDOWS * step);
        }
        if (from == Long.MAX_VALUE) {
            return finals;
        }
        Set<String> topics = monitors.stream().map(m -> m.outputs().estimatesTopic())
                .collect(Collectors.toCollection(TreeSet::new));
        readBack(topics, Math.max(0, from), r -> {
            WindowEstimate estimate = r.value() == null ? null : RecentFinals.parse(r.value());
            if (estimate != null) {
                charts.add(estimate);
                finals.add(estimate, r.value());
            } else if (r.value() != null) {
                LOG.warn("skipping unreadable estimate at {}-{}@{}", r.topic(), r.partition(), r.offset());
            }
        });
        if (finals.passedOver() > 0) {
            LOG.warn("the live page shows the estimates of {} streams at most: {} final estimates of further streams "
                    + "not restored", LiveHistory.STREAMS, finals.passedOver());
        }
        return finals;
    }

    /**
     * Every record of {@code topics}, from the beginning (or the first stamped at or after
     * {@code fromMillis}) to the end offsets at the time of the read.
     */
    private void readBack(Set<String> topics, Long fromMillis, Consumer<ConsumerRecord<byte[], byte[]>> sink) {
        if (topics.isEmpty()) {
            return;
        }
        try (BoundedTopicReader reader = new BoundedTopicReader(readerProps, Duration.ofSeconds(30))) {
            topics.forEach(topic -> reader.read(topic, fromMillis, sink));
        }
    }
}
