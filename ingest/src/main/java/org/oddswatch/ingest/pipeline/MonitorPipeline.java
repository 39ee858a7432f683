package org.oddswatch.ingest.pipeline;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.decode.EventRecord;
import org.oddswatch.ingest.decode.RecordScanner;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.decode.Rejection;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The path of one input (topic or file): parse each record once, hand it to every monitor reading
 * the input, route it to the stream of its split value, apply the time rules and dedupe, update the
 * windows, close windows as the watermark passes them, run the alert rules, and report everything to
 * a {@link PipelineListener}. Every record ends in exactly one counted outcome per monitor, and once in
 * the record totals. Deterministic: the same records in the same order give the same output, byte for
 * byte. Not thread-safe: one pipeline, one thread at a time; only its {@link RecordReader}s (the
 * stateless parsing and decoding half) may run on another thread, one reader per thread.
 */
public final class MonitorPipeline {

    /** One monitor's decoder, estimator and streams. */
    private static final class MonitorRoute {
        final MonitorDefinition monitor;
        final EventDecoder decoder;
        final WindowEstimator estimator;
        final BaselineModel sharedBaseline;
        final Map<String, StreamState> streams = new LinkedHashMap<>();
        final OutcomeCounts unrouted = new OutcomeCounts();

        MonitorRoute(MonitorDefinition monitor, BaselineModel sharedBaseline) {
            this.monitor = monitor;
            this.decoder = new EventDecoder(monitor);
            this.estimator = new WindowEstimator(decoder.coder(), monitor.estimatorOptions());
            this.sharedBaseline = sharedBaseline;
        }
    }

    private final String input;
    private final List<MonitorRoute> routes = new ArrayList<>();
    private final Map<String, StreamState> streamsByName = new LinkedHashMap<>();
    private final PipelineListener listener;
    private final PipelineSettings settings;
    /** This pipeline's own reader (one streaming pass per record for all monitors, no JSON tree). */
    private final RecordReader reader;
    private final OutcomeCounts totals = new OutcomeCounts();
    private final Map<String, List<Alert>> pendingRestore = new LinkedHashMap<>();
    /** CUSUM values to resume the charts of streams not seen yet from, and the rebuild's re-read start. */
    private CusumHistory chartHistory;
    private long chartsRereadFrom;
    private long rebuilt;
    /** Record-level outcomes of held records decided since the last {@link #drainDecidedHeld}. */
    private final List<RecordOutcome> decidedHeld = new ArrayList<>();
    /** The record being offered when a stream holds it (shared by the monitors of the input), else null. */
    private HeldRecord heldNow;
    /** Live (not re-read) records some stream still holds: the service commits no offset past them. */
    private final Set<HeldRecord> liveHeld = new LinkedHashSet<>();
    /** Removes the partition's stream-count gauge ({@link #forPartition} with a registry), else null. */
    private Runnable streamsGaugeRemoval;

    /**
     * @param input the topic or file name, for status
     * @param monitors the monitors reading this input, in definition order
     * @throws IllegalArgumentException when a frozen baseline file (without {@code {split}}) cannot be read
     */
    public MonitorPipeline(String input, List<MonitorDefinition> monitors, PipelineListener listener,
                           PipelineSettings settings) {
        this.input = input;
        this.listener = listener;
        this.settings = settings;
        for (MonitorDefinition monitor : monitors) {
            BaselineModel shared = null;
            BaselineSpec spec = monitor.baseline();
            if (spec != null && !spec.isFixedPeriod() && !spec.file().contains("{split}")) {
                Path file = spec.fileFor(monitor.definitionDir(), null);
                try {
                    shared = settings.baselines().read(file, monitor);
                } catch (IOException | RuntimeException e) {
                    throw new IllegalArgumentException("monitor " + monitor.name() + ": cannot read baseline file "
                            + file + ": " + e.getMessage(), e);
                }
            }
            routes.add(new MonitorRoute(monitor, shared));
        }
        this.reader = new RecordReader();
    }

    /**
     * The pipeline of one Kafka partition: the monitors reading {@code topic}, the definition's record
     * limits, baseline files in the alerts format, and replay hints naming the topic.
     *
     * @param registry meter registry for a gauge of this partition's streams, or null
     */
    public static MonitorPipeline forPartition(MonitorConfig config, String topic, int partition,
                                               PipelineListener listener, MeterRegistry registry) {
        PipelineSettings settings = PipelineSettings.defaults()
                .withLimits(config.limits())
                .withReplayHint(new ReplayHint(config.file(), null, topic));
        MonitorPipeline pipeline = new MonitorPipeline(topic + "-" + partition, config.monitorsFor(topic), listener,
                settings);
        if (registry != null) {
            Gauge gauge = Gauge.builder("oddswatch.pipeline.streams", pipeline, p -> p.streamsByName.size())
                    .description("streams held by one partition's pipeline")
                    .tag("topic", topic)
                    .tag("partition", Integer.toString(partition))
                    .register(registry);
            pipeline.streamsGaugeRemoval = () -> registry.remove(gauge);
        }
        return pipeline;
    }

    public String input() {
        return input;
    }

    /** The watermark (largest event time) of a stream, or {@link Long#MIN_VALUE} when unknown. */
    public long watermark(String stream) {
        StreamState state = streamsByName.get(stream);
        return state == null ? Long.MIN_VALUE : state.watermark();
    }

    /**
     * Offers one record value: {@link #read} and {@link #offerRead} in one step.
     *
     * @param suppressOutput true while rebuilding state: state is updated, nothing is emitted and
     *     nothing is counted (the record was handled before the restart)
     * @return the record's outcome (accepted when any monitor accepted it)
     */
    public RecordOutcome offer(byte[] value, RecordOrigin origin, boolean suppressOutput) {
        return offerRead(reader.read(value), value, origin, suppressOutput);
    }

    /** Offers a record that is already a JSON tree (a CSV row); {@code original} is kept for rejects. */
    public RecordOutcome offerTree(JsonNode tree, byte[] original, RecordOrigin origin, boolean suppressOutput) {
        return offerRead(reader.read(EventRecord.of(tree)), original, origin, suppressOutput);
    }

    /**
     * A record as every monitor of the input decoded it: unreadable (with the reason), or one
     * decoding result per monitor, in definition order. Depends on the bytes and the definition
     * only, never on a stream's state.
     */
    public static final class ReadRecord {
        private final Rejection unreadable;
        /** The result of an input's only monitor (the common case: no array per record), or null. */
        private final EventDecoder.Result only;
        /** One result per monitor when the input has several, else null. */
        private final EventDecoder.Result[] results;

        private ReadRecord(Rejection unreadable, EventDecoder.Result only, EventDecoder.Result[] results) {
            this.unreadable = unreadable;
            this.only = only;
            this.results = results;
        }

        private EventDecoder.Result result(int route) {
            return results == null ? only : results[route];
        }
    }

    /**
     * Reads records for this pipeline: the parsing and decoding half of {@link #offer}, which needs
     * no stream state, so it can run on another thread than the pipeline (one reader per thread: it
     * reuses its parse buffers). The pipeline has one of its own.
     */
    public final class RecordReader {
        // Its own copies: a reader on another thread never touches the pipeline's objects per
        // record (they sit next to counters the pipeline thread writes all the time).
        private final RecordScanner scanner = new RecordScanner(settings.limits(), monitors());
        private final EventDecoder.Bound[] decoders = decoders(scanner);

        public ReadRecord read(byte[] value) {
            return read(scanner.scan(value));
        }

        private ReadRecord read(RecordScanner.Scanned scanned) {
            return scanned.ok() ? read(scanned.record()) : new ReadRecord(scanned.rejection(), null, null);
        }

        /**
         * Reads a batch of values, in order, with one parser for the batch ({@link RecordScanner#scanAll}):
         * value {@code i} ends in {@code read[offset + i]}, or its error (a defect) in
         * {@code failed[offset + i]}. The same results as {@link #read(byte[])} value by value.
         */
        public void readAll(List<byte[]> values, ReadRecord[] read, RuntimeException[] failed, int offset) {
            scanner.scanAll(values, new RecordScanner.ScanSink() {
                @Override
                public void accept(int index, RecordScanner.Scanned scanned) {
                    read[offset + index] = read(scanned);
                }

                @Override
                public void failed(int index, RuntimeException error) {
                    failed[offset + index] = error;
                }
            });
        }

        ReadRecord read(EventRecord record) {
            if (decoders.length == 1) {
                return new ReadRecord(null, decoders[0].decode(record), null);
            }
            EventDecoder.Result[] results = new EventDecoder.Result[decoders.length];
            for (int r = 0; r < results.length; r++) {
                results[r] = decoders[r].decode(record);
            }
            return new ReadRecord(null, null, results);
        }
    }

    private EventDecoder.Bound[] decoders(RecordScanner scanner) {
        EventDecoder.Bound[] decoders = new EventDecoder.Bound[routes.size()];
        for (int r = 0; r < decoders.length; r++) {
            decoders[r] = routes.get(r).decoder.boundTo(scanner);
        }
        return decoders;
    }

    /** A new reader for another thread (the service's poll thread). */
    public RecordReader newReader() {
        return new RecordReader();
    }

    private List<MonitorDefinition> monitors() {
        List<MonitorDefinition> monitors = new ArrayList<>();
        for (MonitorRoute route : routes) {
            monitors.add(route.monitor);
        }
        return monitors;
    }

    /**
     * The stateful half of {@link #offer}: routes a record read by a {@link RecordReader} of this
     * pipeline, applies the time rules and dedupe, updates the windows and reports the outcome.
     *
     * @param original the record's bytes, for rejects
     */
    public RecordOutcome offerRead(ReadRecord read, byte[] original, RecordOrigin origin, boolean suppressOutput) {
        if (read.unreadable != null) {
            return offerUnreadable(original, origin, read.unreadable.reason(), read.unreadable.detail(),
                    suppressOutput);
        }
        RecordOutcome overall = null;
        heldNow = null;
        for (int r = 0; r < routes.size(); r++) {
            RecordOutcome outcome = offerTo(routes.get(r), read.result(r), original, origin, suppressOutput);
            if (!outcome.held() && (overall == null || (outcome.accepted() && !overall.accepted()))) {
                overall = outcome;
            }
        }
        HeldRecord held = heldNow;
        heldNow = null;
        if (held != null) {
            held.inOffer = false;
            held.merge(overall);
            if (!suppressOutput && held.holders > 0) {
                liveHeld.add(held);
            }
            if (!held.decided()) {
                return RecordOutcome.HELD; // counted when the holding streams decide
            }
            held.totalsCounted = true;
            overall = held.best;
        } else if (overall == null) {
            overall = RecordOutcome.rejected(RejectReason.MISSING_FIELD, "no monitor reads this input");
        }
        count(totals, overall, suppressOutput);
        return overall;
    }

    /**
     * The smallest source offset of a live record that some stream still holds beyond its time
     * horizon, or {@link Long#MAX_VALUE} when none is held. The live service commits no offset past
     * it: a held record is in no window yet, so a restart must read it again (the rebuild re-reads
     * what lies between it and the last record applied, as it does for any uncommitted record).
     */
    public long oldestHeldOffset() {
        long oldest = Long.MAX_VALUE;
        for (HeldRecord record : liveHeld) {
            oldest = Math.min(oldest, record.origin.offset());
        }
        return oldest;
    }

    /**
     * A held event's decided outcome: counted and reported like an outcome of {@code offer} (in the
     * stream, to the listener, to rejects), and once all streams holding the record decided, in the
     * record totals.
     */
    private void resolved(StreamState stream, HeldRecord record, DecodedEvent event, RecordOutcome outcome,
                          boolean suppress) {
        report(stream, outcome, event, record.original, record.origin, suppress);
        record.holders--;
        if (record.holders == 0) {
            liveHeld.remove(record);
        }
        record.merge(outcome);
        if (!record.inOffer && record.decided()) {
            record.totalsCounted = true;
            count(totals, record.best, suppress);
            if (!suppress) {
                decidedHeld.add(record.best);
            }
        }
    }

    private void report(StreamState stream, RecordOutcome outcome, DecodedEvent event, byte[] original,
                        RecordOrigin origin, boolean suppress) {
        count(stream.counts(), outcome, suppress);
        if (!suppress) {
            listener.onOutcome(stream.monitorName(), stream.name(), outcome);
            if (outcome.accepted()) {
                listener.onAccepted(stream.monitorName(), stream.name(), event);
            }
        }
        if (!suppress && (outcome.outcome() == Outcome.REJECTED || outcome.outcome() == Outcome.LATE)) {
            listener.onReject(new RejectedRecord(stream.monitorName(), stream.name(), outcome.outcome(),
                    outcome.reason(), outcome.detail(), origin, original));
        }
    }

    /** Counts and reports a record that could not be read at all (before any monitor saw it). */
    public RecordOutcome offerUnreadable(byte[] original, RecordOrigin origin, String reason, String detail,
                                         boolean suppressOutput) {
        RecordOutcome outcome = RecordOutcome.rejected(reason, detail);
        for (MonitorRoute route : routes) {
            count(route.unrouted, outcome, suppressOutput);
            if (!suppressOutput) {
                listener.onOutcome(route.monitor.name(), null, outcome);
            }
        }
        count(totals, outcome, suppressOutput);
        if (!suppressOutput) {
            listener.onReject(new RejectedRecord(null, null, Outcome.REJECTED, reason, detail, origin, original));
        }
        return outcome;
    }

    private RecordOutcome offerTo(MonitorRoute route, EventDecoder.Result decoded, byte[] original, RecordOrigin origin,
                                  boolean suppress) {
        if (!decoded.ok()) {
            return rejectUnrouted(route, null, decoded.rejection(), original, origin, suppress);
        }
        DecodedEvent event = decoded.event();
        if (!settings.inRange(event.timeMillis())) {
            RecordOutcome outcome = RecordOutcome.rejected(RejectReason.OUTSIDE_RANGE, "outside the replay range");
            count(route.unrouted, outcome, suppress);
            if (!suppress) {
                listener.onOutcome(route.monitor.name(), null, outcome);
            }
            return outcome;
        }
        StreamState stream = route.streams.get(event.splitValue());
        if (stream == null) {
            String streamName = route.monitor.streamName(event.splitValue());
            if (route.monitor.split() != null && route.streams.size() >= route.monitor.split().maxStreams()) {
                // The reject names the would-be stream; the meters get none (the stream tag holds
                // accepted streams only, never a name made from a rejected record's value).
                return rejectUnrouted(route, streamName, new Rejection(RejectReason.TOO_MANY_STREAMS,
                        "split value '" + event.splitValue() + "' would be stream " + (route.streams.size() + 1)
                                + " of at most " + route.monitor.split().maxStreams()), original, origin, suppress);
            }
            stream = newStream(route, streamName, event.splitValue());
        }
        RecordOutcome outcome = stream.offer(event, suppress);
        if (outcome.held()) {
            if (heldNow == null) {
                heldNow = new HeldRecord(original, origin);
            }
            heldNow.holders++;
            stream.hold(event, heldNow, suppress);
            return outcome;
        }
        report(stream, outcome, event, original, origin, suppress);
        return outcome;
    }

    private RecordOutcome rejectUnrouted(MonitorRoute route, String stream, Rejection rejection, byte[] original,
                                         RecordOrigin origin, boolean suppress) {
        RecordOutcome outcome = RecordOutcome.rejected(rejection.reason(), rejection.detail());
        count(route.unrouted, outcome, suppress);
        if (!suppress) {
            listener.onOutcome(route.monitor.name(), null, outcome);
            listener.onReject(new RejectedRecord(route.monitor.name(), stream, Outcome.REJECTED, rejection.reason(),
                    rejection.detail(), origin, original));
        }
        return outcome;
    }

    private StreamState newStream(MonitorRoute route, String name, String splitValue) {
        MonitorDefinition monitor = route.monitor;
        int strata = monitor.strata();
        int patternLimit = monitor.estimates().patternLimit();
        WindowStore store = new WindowStore(route.decoder.coder(), patternLimit, strata);
        BaselineSpec spec = monitor.baseline();
        WindowStore baselineStore = null;
        BaselineModel fileBaseline = route.sharedBaseline;
        String note = null;
        if (spec != null && spec.isFixedPeriod()) {
            baselineStore = new WindowStore(route.decoder.coder(), patternLimit, strata);
        } else if (spec != null && fileBaseline == null) {
            Path file = spec.fileFor(monitor.definitionDir(), splitValue);
            try {
                fileBaseline = settings.baselines().read(file, monitor);
            } catch (IOException | RuntimeException e) {
                note = "cannot read baseline file " + file + ": " + e.getMessage();
            }
        }
        StreamState stream = new StreamState(name, monitor, route.estimator, store, baselineStore, fileBaseline, note,
                listener, settings.replayHint(), this::resolved);
        List<Alert> restore = pendingRestore.remove(name);
        if (restore != null) {
            stream.restore(restore);
            reportOpen(restore);
        }
        if (chartHistory != null) {
            stream.resumeCharts(chartHistory.of(name), chartsRereadFrom);
        }
        route.streams.put(splitValue, stream);
        streamsByName.put(name, stream);
        return stream;
    }

    private void count(OutcomeCounts counts, RecordOutcome outcome, boolean suppress) {
        if (suppress) {
            if (counts == totals) {
                rebuilt++;
            }
        } else {
            counts.add(outcome);
        }
    }

    /**
     * Hands over the record-level outcomes of held records decided since the last call (not
     * suppressed): a caller that counts records by the return value of {@code offer}, which was
     * {@link RecordOutcome#HELD} for them, counts them here.
     */
    public void drainDecidedHeld(java.util.function.Consumer<RecordOutcome> into) {
        if (!decidedHeld.isEmpty()) {
            decidedHeld.forEach(into);
            decidedHeld.clear();
        }
    }

    /** Tells the listener that the records offered so far are a finished batch ({@link PipelineListener#onBatchDone}). */
    public void batchDone() {
        listener.onBatchDone();
    }

    /** Emits an interim estimate of every stream's open window (live refresh tick). */
    public void emitInterim() {
        for (StreamState stream : streamsByName.values()) {
            stream.emitInterim();
        }
    }

    /** Moves a stream's watermark to {@code eventTime} if later (idle timeout, live only). */
    public void advanceWatermark(String stream, long eventTime) {
        StreamState state = streamsByName.get(stream);
        if (state != null) {
            state.advanceWatermark(eventTime, false);
        }
    }

    /** End of input: closes every window that has received events, in stream creation order. */
    public void closeAll() {
        for (StreamState stream : streamsByName.values()) {
            stream.closeAll();
        }
    }

    /**
     * Restores open alert episodes published before a restart; alerts of streams not seen yet are kept
     * until the stream's first event. The latest message of each episode still open goes to
     * {@link PipelineListener#onAlertRestored} (for the alert-state gauge) once the stream is held
     * here: at once for a stream that exists, else on its first event in this pipeline.
     */
    public void restoreAlerts(List<Alert> published) {
        Map<String, List<Alert>> byStream = new LinkedHashMap<>();
        for (Alert alert : published) {
            byStream.computeIfAbsent(alert.stream(), s -> new ArrayList<>()).add(alert);
        }
        for (Map.Entry<String, List<Alert>> entry : byStream.entrySet()) {
            StreamState stream = streamsByName.get(entry.getKey());
            if (stream != null) {
                stream.restore(entry.getValue());
                reportOpen(entry.getValue());
            } else {
                pendingRestore.computeIfAbsent(entry.getKey(), s -> new ArrayList<>()).addAll(entry.getValue());
            }
        }
    }

    /**
     * Continues the CUSUM charts after a restart from the values published with final windows, for
     * the streams with a baseline file ({@link StreamState#resumeCharts}): at once for a stream that
     * exists, else before its first event here. Call before the rebuild re-feeds any record.
     *
     * @param rereadFromMillis the earliest event time the rebuild is sure to re-read: every event at
     *     or after it lies at or after the offset the rebuild starts from (its record time is at or
     *     after its event time)
     */
    public void resumeCharts(CusumHistory published, long rereadFromMillis) {
        chartHistory = published;
        chartsRereadFrom = rereadFromMillis;
        for (StreamState stream : streamsByName.values()) {
            stream.resumeCharts(published.of(stream.name()), rereadFromMillis);
        }
    }

    /**
     * Tells the listener the latest message of every episode still open among one stream's restored
     * alerts. Only for a stream this pipeline holds: the alerts topic also holds the episodes of
     * streams other partitions (and instances) hold, which must not show here.
     */
    private void reportOpen(List<Alert> streamAlerts) {
        Map<List<String>, Alert> latestByEpisode = new LinkedHashMap<>();
        for (Alert alert : streamAlerts) {
            latestByEpisode.put(List.of(alert.rule(), alert.subject().term(), String.valueOf(alert.subject().level())),
                    alert);
        }
        for (Alert latest : latestByEpisode.values()) {
            if (latest.state() != AlertState.CLEARED) {
                listener.onAlertRestored(latest);
            }
        }
    }

    /**
     * The pipeline's streams leave this instance (its partition was revoked or lost): tells the
     * listener ({@link PipelineListener#onStreamsReleased}) so their meters go, and removes the
     * partition's stream-count gauge. The pipeline is not used afterwards.
     */
    public void release() {
        listener.onStreamsReleased(streams());
        if (streamsGaugeRemoval != null) {
            streamsGaugeRemoval.run();
        }
    }

    /** Stream names in creation order. */
    public List<String> streams() {
        return new ArrayList<>(streamsByName.keySet());
    }

    /** The counts by record (one outcome per record). */
    public OutcomeCounts.Snapshot totals() {
        return totals.snapshot();
    }

    public PipelineSnapshot snapshot() {
        List<PipelineSnapshot.MonitorStatus> monitors = new ArrayList<>();
        List<StreamStatus> streams = new ArrayList<>();
        for (MonitorRoute route : routes) {
            monitors.add(new PipelineSnapshot.MonitorStatus(route.monitor.name(), route.streams.size(),
                    route.unrouted.snapshot()));
            for (StreamState stream : route.streams.values()) {
                streams.add(stream.status());
            }
        }
        return new PipelineSnapshot(input, totals.snapshot(), rebuilt, monitors, streams);
    }
}
