package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.NavigableMap;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * One stream's state: its window store, watermark and dedupe window ({@link DedupeWindow}), the
 * events held beyond the horizon ({@link FutureHold}), the closing of its windows
 * ({@link WindowCloser}) and its baseline with the alert engine ({@link StreamBaseline}).
 *
 * <p>Time rules, with buckets of one step, {@code k = width/step} buckets per window and lateness
 * {@code L}: the watermark {@code W} is the largest event time seen; window {@code e} (end bucket)
 * is final when {@code W >= start(e) + L}, so every window with {@code e <= bucketOf(W - L)} is
 * final. An event in bucket {@code b} is late when window {@code b+1} (its first window) is final.
 * Buckets before {@code F + 1 - k} ({@code F} the end bucket of the newest final window) can no
 * longer be part of a window and are dropped, with their ids ({@link WindowCloser}). Only windows holding at least one event are estimated.
 *
 * <p>An event later than {@code W + maxFutureSkew} is held, not applied, until the stream's own
 * events decide it ({@link FutureHold}): applied once a chain of held events confirms a new frontier
 * or the watermark catches up with it, rejected {@code too-far-in-future} once the stream moved on
 * without it. A held event's outcome is reported through {@link HeldOutcomes} when it is decided.
 */
final class StreamState {

    /** Receives the outcome of a held event once it is decided. */
    interface HeldOutcomes {
        void resolved(StreamState stream, HeldRecord record, DecodedEvent event, RecordOutcome outcome, boolean suppress);
    }

    private final String name;
    private final MonitorDefinition monitor;
    private final WindowGeometry geometry;
    private final FutureHold future;
    private final HeldOutcomes heldOutcomes;
    private final WindowStore store;
    /** The ids of the events in the store's buckets. */
    private final DedupeWindow dedupe = new DedupeWindow();
    private final StreamBaseline baseline;
    private final WindowCloser windows;
    private final OutcomeCounts counts = new OutcomeCounts();

    private long watermark = Long.MIN_VALUE;
    /** Accepted events, and a bit per term (first 64) set once an accepted event had a value for it. */
    private long acceptedEvents;
    private long termsWithValues;

    StreamState(String name, MonitorDefinition monitor, WindowEstimator estimator, WindowStore store,
                WindowStore baselineStore, BaselineModel fileBaseline, String fileBaselineNote,
                PipelineListener listener, ReplayHint replayHint, HeldOutcomes heldOutcomes) {
        this.name = name;
        this.monitor = monitor;
        this.geometry = monitor.geometry();
        this.future = new FutureHold(monitor.event());
        this.heldOutcomes = heldOutcomes;
        this.store = store;
        this.baseline = new StreamBaseline(name, monitor, estimator, baselineStore, fileBaseline, fileBaselineNote,
                replayHint);
        this.windows = new WindowCloser(name, estimator, geometry, store, dedupe, baseline, listener);
    }

    String name() {
        return name;
    }

    String monitorName() {
        return monitor.name();
    }

    long watermark() {
        return watermark;
    }

    OutcomeCounts counts() {
        return counts;
    }

    /**
     * Applies time rules and dedupe to one decoded event and, when accepted, stores it. An event
     * beyond the horizon changes nothing and gives {@link RecordOutcome#HELD}: the caller then hands
     * it to {@link #hold} with its record.
     */
    RecordOutcome offer(DecodedEvent event, boolean suppress) {
        if (future.beyond(event.timeMillis(), watermark)) {
            return RecordOutcome.HELD;
        }
        long before = watermark;
        RecordOutcome outcome = apply(event, suppress);
        if (watermark != before && !future.isEmpty()) {
            settleHeld(suppress);
        }
        return outcome;
    }

    /**
     * Holds an event that {@link #offer} found beyond the horizon. Every decision this causes
     * (including about this event) is reported through {@link HeldOutcomes} before it returns.
     */
    void hold(DecodedEvent event, HeldRecord record, boolean suppress) {
        FutureHold.Held evicted = future.evictIfFull();
        if (evicted != null) {
            resolve(evicted, RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE, Instant.ofEpochMilli(evicted.time())
                    + " was held beyond the watermark " + Instant.ofEpochMilli(watermark) + " + "
                    + future.skew() + " and dropped: the hold of " + future.capacity() + " events is full"), suppress);
        }
        long frontier = future.hold(event, record, watermark);
        if (frontier != Long.MIN_VALUE) {
            for (FutureHold.Held held : future.takeThrough(frontier)) {
                resolve(held, apply(held.event, suppress), suppress);
            }
            settleHeld(suppress);
        }
    }

    /**
     * After the watermark moved: applies held events it has come within the horizon of, then
     * rejects those held since the watermark was a whole horizon earlier (the stream moved on
     * without them).
     */
    private void settleHeld(boolean suppress) {
        long before;
        do {
            before = watermark;
            long horizon = watermark > Long.MAX_VALUE - future.skew().toMillis()
                    ? Long.MAX_VALUE : watermark + future.skew().toMillis();
            for (FutureHold.Held held : future.takeThrough(horizon)) {
                resolve(held, apply(held.event, suppress), suppress);
            }
        } while (watermark != before && !future.isEmpty());
        for (FutureHold.Held held : future.takeHeldBefore(watermark - future.skew().toMillis() + 1)) {
            resolve(held, RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE, Instant.ofEpochMilli(held.time())
                    + " stayed more than " + future.skew() + " after the watermark while the stream moved on from "
                    + Instant.ofEpochMilli(held.heldAt) + " to " + Instant.ofEpochMilli(watermark)
                    + " without confirming it (" + monitor.event().futureConfirm() + " events spanning "
                    + monitor.event().futureSpan() + " confirm a new frontier)"), suppress);
        }
    }

    private void resolve(FutureHold.Held held, RecordOutcome outcome, boolean suppress) {
        heldOutcomes.resolved(this, held.record, held.event, outcome, suppress);
    }

    /** The time rules (late) and dedupe, then the store: the path of every event within the horizon. */
    private RecordOutcome apply(DecodedEvent event, boolean suppress) {
        long time = event.timeMillis();
        long bucket = geometry.bucketOf(time);
        if (watermark != Long.MIN_VALUE && geometry.isFinal(bucket + 1, watermark)) {
            return RecordOutcome.late("the window ending " + geometry.windowEnd(bucket + 1)
                    + " is final (watermark " + Instant.ofEpochMilli(watermark) + ")");
        }
        if (!dedupe.add(event.id(), bucket)) {
            return RecordOutcome.duplicate("id '" + event.id() + "' already seen");
        }
        try {
            store.add(bucket, event.row(), event.positive(), event.stratum());
        } catch (RuntimeException e) {
            dedupe.remove(event.id()); // not stored, so not held: the same id may come again
            throw e;
        }
        baseline.onAccepted(event);
        acceptedEvents++;
        termsWithValues |= ~event.absentTerms();
        if (time > watermark) {
            watermark = time;
            windows.closeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
        }
        return RecordOutcome.ACCEPTED;
    }

    /** Moves the watermark on without an event (idle timeout, live only). */
    void advanceWatermark(long time, boolean suppress) {
        if (time > watermark) {
            watermark = time;
            windows.closeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
            if (!future.isEmpty()) {
                settleHeld(suppress);
            }
        }
    }

    /**
     * End of input: held events that no evidence confirmed are rejected, then every window that
     * holds events becomes final.
     */
    void closeAll() {
        for (FutureHold.Held held : future.takeAll()) {
            resolve(held, RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE, Instant.ofEpochMilli(held.time())
                    + " is more than " + future.skew() + " after the watermark " + Instant.ofEpochMilli(watermark)
                    + " and no new frontier was confirmed by the end of the input"), false);
        }
        windows.closeAll();
    }

    /** An interim estimate of the window holding the watermark, unless that window is final. */
    void emitInterim() {
        windows.emitInterim(watermark);
    }

    /** Open episodes published before a restart; applied when the alert engine exists. */
    void restore(List<Alert> alerts) {
        baseline.restore(alerts);
    }

    /** See {@link StreamBaseline#resumeCharts}. */
    int resumeCharts(NavigableMap<Instant, List<CusumValue>> published, long rereadFromMillis) {
        return baseline.resumeCharts(published, rereadFromMillis);
    }

    /**
     * What is not monitored on this stream: what its baseline leaves unmonitored
     * ({@link StreamBaseline#gaps}), then the terms no accepted event had a value for.
     */
    List<MonitoringGap> gaps() {
        List<MonitoringGap> gaps = new ArrayList<>(baseline.gaps());
        if (acceptedEvents > 0) {
            for (int t = 0; t < Math.min(Long.SIZE, monitor.terms().size()); t++) {
                if ((termsWithValues & (1L << t)) == 0) {
                    gaps.add(MonitoringGap.term(name, monitor.terms().get(t).name(), "none of the "
                            + BaselineInformation.withheld(acceptedEvents) + " accepted event(s) has a value for it, so "
                            + "every event is left out of the model fit"));
                }
            }
        }
        return gaps;
    }

    StreamStatus status() {
        WindowEstimate lastFinal = windows.lastFinal();
        BaselineModel model = baseline.model();
        return new StreamStatus(name, monitor.name(),
                watermark == Long.MIN_VALUE ? null : Instant.ofEpochMilli(watermark),
                lastFinal == null ? null : lastFinal.windowEnd(), windows.finalWindows(), baseline.state(),
                baseline.note(), model == null ? null : model.events(), model == null ? null : model.cases(),
                store.bucketCount(), store.approximateBytes(), future.size(), counts.snapshot(), gaps());
    }
}
