package org.oddswatch.ingest.pipeline;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.function.Consumer;
import java.util.stream.Collectors;
import org.oddswatch.alerts.engine.FalseAlarmBudget;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.Decoding;
import org.oddswatch.ingest.decode.RecordParser;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.decode.Rejection;
import org.oddswatch.ingest.decode.UnreadableRecordException;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The path of one input (topic or file): parse each record once, decode it for every monitor
 * reading the input, route the event to the {@link StreamState} of its split value and report
 * everything to a {@link PipelineListener}. Every record ends in one counted outcome per monitor,
 * and once in the record totals. The same records in the same order give the same output, byte for
 * byte. Not thread-safe.
 */
public final class MonitorPipeline {

    private final String input;
    private final RecordParser parser;
    private final List<MonitorRoute> routes = new ArrayList<>();
    private final Map<String, StreamState> streamsByName = new LinkedHashMap<>();
    final PipelineListener listener;
    final PipelineSettings settings;
    private final HeldRecords held = new HeldRecords();
    private final OutcomeCounts totals = new OutcomeCounts();
    /** Records offered with output suppressed (a state rebuild), not in the totals. */
    private long rebuilt;
    private Runnable onRelease;
    /** Restored alerts of streams not opened yet, by stream name. */
    private final Map<String, List<Alert>> pendingRestore = new LinkedHashMap<>();
    /** The CUSUM values new streams resume their charts from, else null, and the rebuild's re-read start. */
    private CusumHistory chartHistory;
    private long chartsRereadFrom;

    /**
     * @param input the topic or file name, for status
     * @param monitors the monitors reading this input, in definition order
     * @throws IllegalArgumentException when a baseline file shared by a monitor's streams cannot be read
     */
    public MonitorPipeline(String input, List<MonitorDefinition> monitors, PipelineListener listener,
                           PipelineSettings settings) {
        this.input = input;
        this.listener = listener;
        this.settings = settings;
        this.parser = new RecordParser(settings.limits());
        for (MonitorDefinition monitor : monitors) {
            routes.add(new MonitorRoute(monitor));
        }
    }

    /** Sets what {@link #release()} runs after telling the listener (its owner unbinds meters of its own). */
    public void onRelease(Runnable action) {
        this.onRelease = action;
    }

    /** The number of streams held. */
    public int streamCount() {
        return streamsByName.size();
    }

    /**
     * Offers one record value: {@link #offerTree} once parsed, else {@link #offerUnreadable}.
     *
     * @param suppressOutput true while rebuilding state: state is updated, nothing emitted or counted
     * @return accepted when any monitor accepted the record, else the first monitor's outcome
     *     ({@link RecordOutcome#HELD} until the streams holding it decide)
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

    /** Offers a record already parsed (a JSON value or a CSV row); {@code original}: its bytes, for rejects. */
    public RecordOutcome offerTree(JsonNode tree, byte[] original, RecordOrigin origin, boolean suppressOutput) {
        RecordOutcome overall = null;
        held.beginOffer();
        for (MonitorRoute route : routes) {
            overall = HeldRecords.recordLevel(overall,
                    offerTo(route, route.decoder.decode(tree), original, origin, suppressOutput));
        }
        overall = held.endOffer(overall, suppressOutput);
        if (overall == null) {
            overall = RecordOutcome.rejected(RejectReason.MISSING_FIELD, "no monitor reads this input");
        } else if (overall.held()) {
            return overall; // counted when the holding streams decide
        }
        countRecord(overall, suppressOutput);
        return overall;
    }

    /**
     * The smallest source offset of a live record a stream holds beyond its time horizon, else
     * {@link Long#MAX_VALUE}: the service commits no offset past it, so a restart reads it again.
     */
    public long oldestHeldOffset() {
        return held.live.stream().mapToLong(r -> r.origin.offset()).min().orElse(Long.MAX_VALUE);
    }

    /** Counts and reports a record that could not be read at all (before any monitor saw it). */
    public RecordOutcome offerUnreadable(byte[] original, RecordOrigin origin, String reason, String detail,
                                         boolean suppressOutput) {
        RecordOutcome outcome = RecordOutcome.rejected(reason, detail);
        for (MonitorRoute route : routes) {
            countUnrouted(route, outcome, suppressOutput);
        }
        countRecord(outcome, suppressOutput);
        reject(null, null, outcome, original, origin, suppressOutput);
        return outcome;
    }

    private RecordOutcome offerTo(MonitorRoute route, Decoding decoded, byte[] original, RecordOrigin origin,
                                  boolean suppress) {
        if (!decoded.ok()) {
            return rejectUnrouted(route, null, decoded.rejection(), original, origin, suppress);
        }
        DecodedEvent event = decoded.event();
        StreamState stream = route.streams.get(event.splitValue());
        if (stream == null) {
            String name = route.monitor.streamName(event.splitValue());
            if (route.monitor.split() != null && route.streams.size() >= route.monitor.split().maxStreams()) {
                // the reject names the would-be stream; the meters never get a name made from a rejected value
                return rejectUnrouted(route, name, new Rejection(RejectReason.TOO_MANY_STREAMS,
                        "split value '" + event.splitValue() + "' would be stream " + (route.streams.size() + 1)
                                + " of at most " + route.monitor.split().maxStreams()), original, origin, suppress);
            }
            stream = open(route, name, event.splitValue());
        }
        RecordOutcome outcome = stream.offer(event, suppress);
        if (outcome.held()) {
            held.hold(stream, event, original, origin, suppress);
        } else {
            report(stream, outcome, event, original, origin, suppress);
        }
        return outcome;
    }

    /** A new stream, with what a restart restored for it before it was seen (alerts, CUSUM values). */
    private StreamState open(MonitorRoute route, String name, String splitValue) {
        StreamState stream = new StreamState(this, route, name, splitValue);
        List<Alert> restore = pendingRestore.remove(name);
        if (restore != null) {
            restore(stream, restore);
        }
        if (chartHistory != null) {
            stream.baseline.resumeCharts(chartHistory.of(name), chartsRereadFrom);
        }
        route.streams.put(splitValue, stream);
        streamsByName.put(name, stream);
        return stream;
    }

    /** A held event's decided outcome: reported like any, and in the totals once the record is decided. */
    void resolved(StreamState stream, HeldRecords.Record record, DecodedEvent event, RecordOutcome outcome,
                  boolean suppress) {
        report(stream, outcome, event, record.original, record.origin, suppress);
        RecordOutcome decided = held.resolved(record, outcome, suppress);
        if (decided != null) {
            countRecord(decided, suppress);
        }
    }

    private void report(StreamState stream, RecordOutcome outcome, DecodedEvent event, byte[] original,
                        RecordOrigin origin, boolean suppress) {
        if (suppress) {
            return;
        }
        stream.counts.add(outcome);
        listener.onOutcome(stream.monitor.name(), stream.name, outcome);
        if (outcome.accepted()) {
            listener.onAccepted(stream.monitor.name(), stream.name, event);
        } else if (outcome.outcome() == Outcome.REJECTED || outcome.outcome() == Outcome.LATE) {
            reject(stream.monitor.name(), stream.name, outcome, original, origin, false);
        }
    }

    private RecordOutcome rejectUnrouted(MonitorRoute route, String stream, Rejection rejection, byte[] original,
                                         RecordOrigin origin, boolean suppress) {
        RecordOutcome outcome = RecordOutcome.rejected(rejection.reason(), rejection.detail());
        countUnrouted(route, outcome, suppress);
        reject(route.monitor.name(), stream, outcome, original, origin, suppress);
        return outcome;
    }

    /** Counts and reports the outcome of a record one monitor rejected before it reached a stream. */
    private void countUnrouted(MonitorRoute route, RecordOutcome outcome, boolean suppress) {
        if (!suppress) {
            route.unrouted.add(outcome);
            listener.onOutcome(route.monitor.name(), null, outcome);
        }
    }

    private void reject(String monitor, String stream, RecordOutcome outcome, byte[] original, RecordOrigin origin,
                        boolean suppress) {
        if (!suppress) {
            listener.onReject(new RejectedRecord(monitor, stream, outcome.outcome(), outcome.reason(), outcome.detail(),
                    origin, original));
        }
    }

    private void countRecord(RecordOutcome outcome, boolean suppress) {
        if (suppress) {
            rebuilt++;
        } else {
            totals.add(outcome);
        }
    }

    /** Hands over the record outcomes of held records decided since the last call (offer returned HELD for them). */
    public void drainDecidedHeld(Consumer<RecordOutcome> into) {
        held.decided.forEach(into);
        held.decided.clear();
    }

    /** Tells the listener the records offered so far are a finished batch ({@link PipelineListener#onBatchDone}). */
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
            state.advanceWatermark(eventTime);
        }
    }

    /** End of input: closes every window that has received events, in stream creation order. */
    public void closeAll() {
        streamsByName.values().forEach(StreamState::closeAll);
    }

    /**
     * Restores open alert episodes published before a restart (of a stream not seen yet: on its first
     * event). The latest message of each open episode of a stream this pipeline holds then goes to
     * {@link PipelineListener#onAlertRestored}; the whole list first to {@link PipelineListener#onAlertsRestored}.
     */
    public void restoreAlerts(List<Alert> published) {
        listener.onAlertsRestored(published);
        published.stream().collect(Collectors.groupingBy(Alert::stream, LinkedHashMap::new, Collectors.toList()))
                .forEach((name, alerts) -> {
                    StreamState stream = streamsByName.get(name);
                    if (stream != null) {
                        restore(stream, alerts);
                    } else {
                        pendingRestore.computeIfAbsent(name, s -> new ArrayList<>()).addAll(alerts);
                    }
                });
    }

    private void restore(StreamState stream, List<Alert> alerts) {
        stream.baseline.restore(alerts);
        Map<List<String>, Alert> latestByEpisode = new LinkedHashMap<>();
        alerts.forEach(a -> latestByEpisode.put(List.of(a.rule(), a.subject().term(), "" + a.subject().level()), a));
        latestByEpisode.values().stream().filter(a -> a.state() != AlertState.CLEARED)
                .forEach(listener::onAlertRestored);
    }

    /**
     * Continues the CUSUM charts of the streams with a baseline file after a restart (of a stream not
     * seen yet: on its first event). Call before the rebuild re-feeds any record.
     *
     * @param rereadFromMillis the earliest event time the rebuild is sure to re-read
     */
    public void resumeCharts(CusumHistory published, long rereadFromMillis) {
        chartHistory = published;
        chartsRereadFrom = rereadFromMillis;
        for (StreamState stream : streamsByName.values()) {
            stream.baseline.resumeCharts(published.of(stream.name), rereadFromMillis);
        }
    }

    /** The streams leave this instance (partition revoked or lost): tells the listener, runs {@link #onRelease}. */
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

    /**
     * Per stream with an alert engine, in stream order: the lines of its false-alarm budget's split
     * (the limits it derived and how), for {@code check}.
     */
    public Map<String, List<String>> budgetSplits() {
        Map<String, List<String>> out = new LinkedHashMap<>();
        for (MonitorRoute route : routes) {
            for (StreamState stream : route.streams.values()) {
                FalseAlarmBudget budget = stream.budget();
                if (budget != null) {
                    List<String> lines = new ArrayList<>();
                    lines.add(String.format(Locale.ROOT, "this stream's share: %.4g false alarms a year%s",
                            budget.perStream(), budget.overspent() ? " (explicit limits use up more than 90 % of it)" : ""));
                    budget.shares().forEach(share -> lines.add(share.describe()));
                    out.put(stream.name, lines);
                }
            }
        }
        return out;
    }

    public PipelineSnapshot snapshot() {
        List<PipelineSnapshot.MonitorStatus> monitors = new ArrayList<>();
        List<StreamStatus> streams = new ArrayList<>();
        for (MonitorRoute route : routes) {
            monitors.add(new PipelineSnapshot.MonitorStatus(route.monitor.name(), route.streams.size(),
                    route.unrouted.snapshot()));
            route.streams.values().forEach(stream -> streams.add(stream.status()));
        }
        return new PipelineSnapshot(input, totals.snapshot(), rebuilt, monitors, streams);
    }
}
