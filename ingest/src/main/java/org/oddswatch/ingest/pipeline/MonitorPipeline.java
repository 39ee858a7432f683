package org.oddswatch.ingest.pipeline;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.Consumer;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.Decoding;
import org.oddswatch.ingest.decode.RecordParser;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.decode.Rejection;
import org.oddswatch.ingest.decode.UnreadableRecordException;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The path of one input (topic or file): parse each record once ({@link RecordParser}), decode the
 * tree for every monitor reading the input ({@link org.oddswatch.ingest.decode.EventDecoder}), route
 * the event to the stream of its split value, apply the time rules and dedupe, update the windows,
 * close windows as the watermark passes them, run the alert rules, and report everything to a
 * {@link PipelineListener}. Every record ends in exactly one counted outcome per monitor, and once in
 * the record totals. Deterministic: the same records in the same order give the same output, byte for
 * byte. Not thread-safe: one pipeline, one thread at a time.
 */
public final class MonitorPipeline {

    private final String input;
    private final RecordParser parser;
    private final List<MonitorRoute> routes = new ArrayList<>();
    private final Map<String, StreamState> streamsByName = new LinkedHashMap<>();
    private final PipelineListener listener;
    private final PipelineSettings settings;
    private final StreamFactory streamFactory;
    private final HeldRecords held = new HeldRecords();
    private final OutcomeCounts totals = new OutcomeCounts();
    /** Records offered with output suppressed (re-read while rebuilding state), not counted in the totals. */
    private long rebuilt;
    /** Runs when the pipeline is released ({@link #onRelease}), else null. */
    private Runnable onRelease;

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
        this.parser = new RecordParser(settings.limits());
        this.streamFactory = new StreamFactory(listener, settings, this::resolved);
        for (MonitorDefinition monitor : monitors) {
            routes.add(streamFactory.route(monitor));
        }
    }

    /** Sets what {@link #release()} runs after telling the listener (its owner unbinds meters of its own). */
    public void onRelease(Runnable action) {
        this.onRelease = action;
    }

    /** The number of streams held (read by the per-partition gauge without copying a list). */
    public int streamCount() {
        return streamsByName.size();
    }

    /** The watermark (largest event time) of a stream, or {@link Long#MIN_VALUE} when unknown. */
    public long watermark(String stream) {
        StreamState state = streamsByName.get(stream);
        return state == null ? Long.MIN_VALUE : state.watermark();
    }

    /**
     * Offers one record value: parses it once, then {@link #offerTree}; a value that is not one JSON
     * object within the limits goes to {@link #offerUnreadable} with its reason.
     *
     * @param suppressOutput true while rebuilding state: state is updated, nothing is emitted and
     *     nothing is counted (the record was handled before the restart)
     * @return the record's outcome (accepted when any monitor accepted it)
     */
    public RecordOutcome offer(byte[] value, RecordOrigin origin, boolean suppressOutput) {
        JsonNode tree;
        try {
            tree = parser.parse(value);
        } catch (UnreadableRecordException e) {
            return offerUnreadable(value, origin, e.rejection().reason(), e.rejection().detail(), suppressOutput);
        }
        return offerTree(tree, value, origin, suppressOutput);
    }

    /**
     * Offers a record that is already a JSON tree (a parsed value, or a CSV row): every monitor of the
     * input decodes it, routes it, applies the time rules and dedupe, updates the windows and reports
     * the outcome.
     *
     * @param original the record's bytes, for rejects
     */
    public RecordOutcome offerTree(JsonNode tree, byte[] original, RecordOrigin origin, boolean suppressOutput) {
        RecordOutcome overall = null;
        held.beginOffer();
        for (MonitorRoute route : routes) {
            RecordOutcome outcome = offerTo(route, route.decoder.decode(tree), original, origin, suppressOutput);
            if (!outcome.held() && (overall == null || (outcome.accepted() && !overall.accepted()))) {
                overall = outcome;
            }
        }
        overall = held.endOffer(overall, suppressOutput);
        if (overall == null) {
            overall = RecordOutcome.rejected(RejectReason.MISSING_FIELD, "no monitor reads this input");
        } else if (overall.held()) {
            return overall; // counted when the holding streams decide
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
        return held.oldestLiveOffset();
    }

    /**
     * A held event's decided outcome: counted and reported like an outcome of {@code offer} (in the
     * stream, to the listener, to rejects), and once all streams holding the record decided, in the
     * record totals.
     */
    private void resolved(StreamState stream, HeldRecord record, DecodedEvent event, RecordOutcome outcome,
                          boolean suppress) {
        report(stream, outcome, event, record.original, record.origin, suppress);
        RecordOutcome decided = held.resolved(record, outcome, suppress);
        if (decided != null) {
            count(totals, decided, suppress);
        }
    }

    private void report(StreamState stream, RecordOutcome outcome, DecodedEvent event, byte[] original,
                        RecordOrigin origin, boolean suppress) {
        count(stream.counts(), outcome, suppress);
        if (suppress) {
            return;
        }
        listener.onOutcome(stream.monitorName(), stream.name(), outcome);
        if (outcome.accepted()) {
            listener.onAccepted(stream.monitorName(), stream.name(), event);
        } else if (outcome.outcome() == Outcome.REJECTED || outcome.outcome() == Outcome.LATE) {
            listener.onReject(new RejectedRecord(stream.monitorName(), stream.name(), outcome.outcome(),
                    outcome.reason(), outcome.detail(), origin, original));
        }
    }

    /** Counts and reports a record that could not be read at all (before any monitor saw it). */
    public RecordOutcome offerUnreadable(byte[] original, RecordOrigin origin, String reason, String detail,
                                         boolean suppressOutput) {
        RecordOutcome outcome = RecordOutcome.rejected(reason, detail);
        for (MonitorRoute route : routes) {
            countUnrouted(route, outcome, suppressOutput);
        }
        count(totals, outcome, suppressOutput);
        if (!suppressOutput) {
            listener.onReject(new RejectedRecord(null, null, Outcome.REJECTED, reason, detail, origin, original));
        }
        return outcome;
    }

    private RecordOutcome offerTo(MonitorRoute route, Decoding decoded, byte[] original, RecordOrigin origin,
                                  boolean suppress) {
        if (!decoded.ok()) {
            return rejectUnrouted(route, null, decoded.rejection(), original, origin, suppress);
        }
        DecodedEvent event = decoded.event();
        if (!settings.inRange(event.timeMillis())) {
            return countUnrouted(route, RecordOutcome.rejected(RejectReason.OUTSIDE_RANGE, "outside the replay range"),
                    suppress);
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
            stream = streamFactory.open(route, streamName, event.splitValue());
            route.streams.put(event.splitValue(), stream);
            streamsByName.put(streamName, stream);
        }
        RecordOutcome outcome = stream.offer(event, suppress);
        if (outcome.held()) {
            held.hold(stream, event, original, origin, suppress);
            return outcome;
        }
        report(stream, outcome, event, original, origin, suppress);
        return outcome;
    }

    private RecordOutcome rejectUnrouted(MonitorRoute route, String stream, Rejection rejection, byte[] original,
                                         RecordOrigin origin, boolean suppress) {
        RecordOutcome outcome = countUnrouted(route, RecordOutcome.rejected(rejection.reason(), rejection.detail()),
                suppress);
        if (!suppress) {
            listener.onReject(new RejectedRecord(route.monitor.name(), stream, Outcome.REJECTED, rejection.reason(),
                    rejection.detail(), origin, original));
        }
        return outcome;
    }

    /** Counts and reports the outcome of a record one monitor rejected before it reached a stream. */
    private RecordOutcome countUnrouted(MonitorRoute route, RecordOutcome outcome, boolean suppress) {
        count(route.unrouted, outcome, suppress);
        if (!suppress) {
            listener.onOutcome(route.monitor.name(), null, outcome);
        }
        return outcome;
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
    public void drainDecidedHeld(Consumer<RecordOutcome> into) {
        held.drainDecided(into);
    }

    /** Tells the listener that the records offered so far are a finished batch ({@link PipelineListener#onBatchDone}). */
    public void batchDone() {
        listener.onBatchDone();
    }

    /** Emits an interim estimate of every stream's open window (live refresh tick). */
    public void emitInterim() {
        streamsByName.values().forEach(StreamState::emitInterim);
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
        streamsByName.values().forEach(StreamState::closeAll);
    }

    /**
     * Restores open alert episodes published before a restart; alerts of streams not seen yet are kept
     * until the stream's first event. The latest message of each episode still open goes to
     * {@link PipelineListener#onAlertRestored} (for the alert-state gauge) once the stream is held
     * here: at once for a stream that exists, else on its first event in this pipeline.
     */
    public void restoreAlerts(List<Alert> published) {
        streamFactory.restoreAlerts(published, streamsByName);
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
        streamFactory.resumeCharts(published, rereadFromMillis, streamsByName.values());
    }

    /**
     * The pipeline's streams leave this instance (its partition was revoked or lost): tells the
     * listener ({@link PipelineListener#onStreamsReleased}) so their meters go, and runs the
     * {@link #onRelease} action. The pipeline is not used afterwards.
     */
    public void release() {
        listener.onStreamsReleased(streams());
        if (onRelease != null) {
            onRelease.run();
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
