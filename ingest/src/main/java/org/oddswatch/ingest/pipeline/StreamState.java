package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.NavigableMap;
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
 * One stream's state: window store, watermark, dedupe window ({@link DedupeWindow}), events held
 * beyond the horizon ({@link FutureHold}), the closing of windows ({@link WindowCloser}) and the
 * baseline with the alert engine ({@link StreamBaseline}).
 *
 * <p>Time rules, with buckets of one step, {@code k = width/step} buckets per window and lateness
 * {@code L}: the watermark {@code W} is the largest event time accepted; window {@code e} (end
 * bucket) is final when {@code W >= start(e) + L}. An event in bucket {@code b} is late when window
 * {@code b+1}, its first, is final. An event later than {@code W + maxFutureSkew} is held; its
 * outcome is reported through {@link HeldOutcomes} once decided.
 */
final class StreamState {

    /** Receives the outcome of a held event once it is decided. */
    interface HeldOutcomes {
        void resolved(StreamState stream, HeldRecords.Record record, DecodedEvent event, RecordOutcome outcome,
                      boolean suppress);
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
                StreamBaseline baseline, PipelineListener listener, HeldOutcomes heldOutcomes) {
        this.name = name;
        this.monitor = monitor;
        this.geometry = monitor.geometry();
        this.future = new FutureHold(monitor.event());
        this.heldOutcomes = heldOutcomes;
        this.store = store;
        this.baseline = baseline;
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

    /** Applies the time rules and dedupe, then stores the event; {@link RecordOutcome#HELD} beyond the horizon. */
    RecordOutcome offer(DecodedEvent event, boolean suppress) {
        if (future.beyond(event.timeMillis(), watermark)) {
            return RecordOutcome.HELD;
        }
        long before = watermark;
        RecordOutcome outcome = apply(event, suppress);
        if (watermark != before) {
            settleHeld(suppress);
        }
        return outcome;
    }

    /** Holds an event {@link #offer} found beyond the horizon; reports every decision this causes. */
    void hold(DecodedEvent event, HeldRecords.Record record, boolean suppress) {
        FutureHold.Held evicted = future.evictIfFull();
        if (evicted != null) {
            dismiss(evicted, " was held beyond the watermark " + Instant.ofEpochMilli(watermark) + " + " + future.skew()
                    + " and dropped: the hold of " + future.capacity() + " events is full", suppress);
        }
        long frontier = future.hold(event, record, watermark);
        if (frontier != Long.MIN_VALUE) {
            applyHeld(future.takeThrough(frontier), suppress);
            settleHeld(suppress);
        }
    }

    /** After the watermark moved: applies the held events now within the horizon, dismisses the stale ones. */
    private void settleHeld(boolean suppress) {
        if (future.isEmpty()) {
            return;
        }
        long skew = future.skew().toMillis();
        long before;
        do {
            before = watermark;
            long horizon = watermark > Long.MAX_VALUE - skew ? Long.MAX_VALUE : watermark + skew;
            applyHeld(future.takeThrough(horizon), suppress);
        } while (watermark != before && !future.isEmpty());
        for (FutureHold.Held held : future.takeHeldBefore(watermark - skew + 1)) {
            dismiss(held, " stayed more than " + future.skew() + " after the watermark while the stream moved on from "
                    + Instant.ofEpochMilli(held.heldAt()) + " to " + Instant.ofEpochMilli(watermark)
                    + " without confirming it (" + monitor.event().futureConfirm() + " events spanning "
                    + monitor.event().futureSpan() + " confirm a new frontier)", suppress);
        }
    }

    private void applyHeld(List<FutureHold.Held> taken, boolean suppress) {
        for (FutureHold.Held held : taken) {
            heldOutcomes.resolved(this, held.record(), held.event(), apply(held.event(), suppress), suppress);
        }
    }

    /** Rejects a held event {@code too-far-in-future}; {@code why} follows its time in the detail. */
    private void dismiss(FutureHold.Held held, String why, boolean suppress) {
        heldOutcomes.resolved(this, held.record(), held.event(), RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE,
                Instant.ofEpochMilli(held.time()) + why), suppress);
    }

    /** The late rule and dedupe, then the store: the path of every event within the horizon. */
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
            moveWatermark(time, suppress);
        }
        return RecordOutcome.ACCEPTED;
    }

    private void moveWatermark(long time, boolean suppress) {
        watermark = time;
        windows.closeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
    }

    /** Moves the watermark on without an event (idle timeout, live only). */
    void advanceWatermark(long time) {
        if (time > watermark) {
            moveWatermark(time, false);
            settleHeld(false);
        }
    }

    /** End of input: the held events are dismissed, then every window that holds events becomes final. */
    void closeAll() {
        for (FutureHold.Held held : future.takeThrough(Long.MAX_VALUE)) {
            dismiss(held, " is more than " + future.skew() + " after the watermark " + Instant.ofEpochMilli(watermark)
                    + " and no new frontier was confirmed by the end of the input", false);
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
    void resumeCharts(NavigableMap<Instant, List<CusumValue>> published, long rereadFromMillis) {
        baseline.resumeCharts(published, rereadFromMillis);
    }

    /** What is not monitored: the baseline's gaps, then the terms no accepted event had a value for. */
    List<MonitoringGap> gaps() {
        List<MonitoringGap> gaps = new ArrayList<>(baseline.gaps());
        if (acceptedEvents > 0) {
            for (int t = 0; t < Math.min(Long.SIZE, monitor.terms().size()); t++) {
                if ((termsWithValues & (1L << t)) == 0) {
                    gaps.add(MonitoringGap.term(name, monitor.terms().get(t).name(), "none of the "
                            + BaselineInformation.withheld(acceptedEvents)
                            + " accepted event(s) has a value for it, so every event is left out of the model fit"));
                }
            }
        }
        return gaps;
    }

    /** The stream's false-alarm budget and derived limits, or null while it has no alert engine. */
    org.oddswatch.alerts.engine.FalseAlarmBudget budget() {
        return baseline.budget();
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
