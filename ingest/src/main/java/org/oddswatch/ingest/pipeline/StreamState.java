package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * One stream: its time rules, {@link DedupeWindow}, {@link FutureHold}, window store and the closing
 * of its windows, and its baseline with the alert engine ({@link StreamBaseline}).
 *
 * <p>Time rules, with buckets of one step and lateness {@code L}: the watermark {@code W} is the
 * largest event time accepted; window {@code e} (end bucket) covers buckets {@code e-k .. e-1},
 * {@code k = width/step}, and is final when {@code W >= start(e) + L}. An event in bucket {@code b}
 * is late when window {@code b+1}, its first, is final. An event later than
 * {@code W + maxFutureSkew} is held; its outcome goes to {@link MonitorPipeline#resolved} once
 * decided. A window that becomes final is estimated (if it holds an event), judged
 * ({@link StreamBaseline#judge}) and published before its alerts; then the buckets and ids no open
 * window can use are dropped.
 */
final class StreamState {

    final String name;
    final MonitorDefinition monitor;
    final StreamBaseline baseline;
    final OutcomeCounts counts = new OutcomeCounts();
    private final MonitorPipeline pipeline;
    private final WindowEstimator estimator;
    private final WindowGeometry geometry;
    private final int bucketsPerWindow;
    private final FutureHold future;
    private final WindowStore store;
    /** The ids of the events in the store's buckets. */
    private final DedupeWindow dedupe = new DedupeWindow();

    private long watermark = Long.MIN_VALUE;
    /** Accepted events, and a bit per term (first 64) set once an accepted event had a value for it. */
    private long acceptedEvents;
    private long termsWithValues;
    /** The end bucket of the newest final window, or {@link Long#MIN_VALUE} before the first. */
    private long newestFinalWindow = Long.MIN_VALUE;
    private WindowEstimate lastFinal;
    private long finalWindows;
    private double[] warmStart;

    StreamState(MonitorPipeline pipeline, MonitorRoute route, String name, String splitValue) {
        this.name = name;
        this.monitor = route.monitor;
        this.baseline = new StreamBaseline(route, name, splitValue, pipeline.settings);
        this.pipeline = pipeline;
        this.estimator = route.estimator;
        this.geometry = monitor.geometry();
        this.bucketsPerWindow = geometry.bucketsPerWindow();
        this.future = new FutureHold(monitor.event());
        this.store = route.newStore();
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
            dismiss(evicted, " was held beyond the watermark " + Instant.ofEpochMilli(watermark) + " + " + future.skew
                    + " and dropped: the hold of " + future.capacity + " events is full", suppress);
        }
        long frontier = future.hold(event, record, watermark);
        if (frontier != Long.MIN_VALUE) {
            applyHeld(future.takeThrough(frontier), suppress);
            settleHeld(suppress);
        }
    }

    /** After the watermark moved: applies the held events now within the horizon, dismisses the stale ones. */
    private void settleHeld(boolean suppress) {
        if (future.size() == 0) {
            return;
        }
        long skew = future.skew.toMillis();
        long before;
        do {
            before = watermark;
            applyHeld(future.takeThrough(watermark > Long.MAX_VALUE - skew ? Long.MAX_VALUE : watermark + skew),
                    suppress);
        } while (watermark != before && future.size() > 0);
        for (FutureHold.Held held : future.takeHeldBefore(watermark - skew + 1)) {
            dismiss(held, " stayed more than " + future.skew + " after the watermark while the stream moved on from "
                    + Instant.ofEpochMilli(held.heldAt()) + " to " + Instant.ofEpochMilli(watermark)
                    + " without confirming it (" + monitor.event().futureConfirm() + " events spanning "
                    + monitor.event().futureSpan() + " confirm a new frontier)", suppress);
        }
    }

    private void applyHeld(List<FutureHold.Held> taken, boolean suppress) {
        for (FutureHold.Held held : taken) {
            pipeline.resolved(this, held.record(), held.event(), apply(held.event(), suppress), suppress);
        }
    }

    /** Rejects a held event {@code too-far-in-future}; {@code why} follows its time in the detail. */
    private void dismiss(FutureHold.Held held, String why, boolean suppress) {
        pipeline.resolved(this, held.record(), held.event(), RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE,
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
        closeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
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
            dismiss(held, " is more than " + future.skew + " after the watermark " + Instant.ofEpochMilli(watermark)
                    + " and no new frontier was confirmed by the end of the input", false);
        }
        closeThrough((store.bucketCount() == 0 ? newestFinalWindow : store.newestBucket()) + bucketsPerWindow, false);
        if (baseline.judging()) {
            pipeline.listener.onCusum(name, baseline.cusumReadings());
        }
    }

    /** Makes every window ending at or before bucket {@code newFinal} final. */
    private void closeThrough(long newFinal, boolean suppress) {
        if (newFinal <= newestFinalWindow) {
            return;
        }
        baseline.beforeClosing(newFinal);
        long end = newestFinalWindow == Long.MIN_VALUE ? Long.MIN_VALUE : newestFinalWindow + 1;
        while (true) {
            long held = store.oldestBucketFrom(end == Long.MIN_VALUE ? Long.MIN_VALUE : end - bucketsPerWindow);
            if (held == Long.MAX_VALUE || (end = Math.max(end, held + 1)) > newFinal) {
                break;
            }
            closeWindow(end++, suppress);
        }
        newestFinalWindow = newFinal;
        store.expireBefore(newFinal + 1 - bucketsPerWindow);
        dedupe.expireBefore(newFinal + 1 - bucketsPerWindow);
        if (baseline.judging() && !suppress) {
            pipeline.listener.onCusum(name, baseline.cusumReadings());
        }
    }

    private void closeWindow(long end, boolean suppress) {
        long fitStart = System.nanoTime(); // for the fit-duration meter only; never part of the output
        WindowEstimate estimate = estimate(end, WindowStatus.FINAL);
        long fitNanos = System.nanoTime() - fitStart;
        warmStart = reproducibleStart(estimator.coefficientVector(estimate));
        lastFinal = estimate;
        finalWindows++;
        StreamBaseline.Judged judged = baseline.judge(estimate);
        if (!suppress) { // the estimate (with its chart values) before the window's alerts
            pipeline.listener.onEstimate(judged.published());
            pipeline.listener.onFinalFit(judged.published(), fitNanos);
            for (Alert alert : judged.alerts()) {
                pipeline.listener.onAlert(alert);
            }
        }
    }

    /** An interim estimate of the window holding the watermark, unless that window is final. */
    void emitInterim() {
        long end = watermark == Long.MIN_VALUE ? Long.MIN_VALUE : geometry.bucketOf(watermark) + 1;
        if (end > newestFinalWindow) { // never before the first event
            pipeline.listener.onEstimate(estimate(end, WindowStatus.INTERIM));
        }
    }

    private WindowEstimate estimate(long end, WindowStatus status) {
        return estimator.estimate(name, geometry.windowStart(end), geometry.windowEnd(end), status,
                store.window(end - bucketsPerWindow, end), warmStart, baseline.model());
    }

    /**
     * The next window's warm start: the coefficients rounded to single precision, so that a stream
     * rebuilt after a restart (older windows may differ in the last bits) gives the same estimate.
     */
    static double[] reproducibleStart(double[] coefficients) {
        return coefficients == null ? null : Arrays.stream(coefficients).map(c -> (float) c).toArray();
    }

    /** What is not monitored: the baseline's gaps, then the terms no accepted event had a value for. */
    private List<MonitoringGap> gaps() {
        List<MonitoringGap> gaps = new ArrayList<>(baseline.gaps());
        for (int t = 0; acceptedEvents > 0 && t < Math.min(Long.SIZE, monitor.terms().size()); t++) {
            if ((termsWithValues & (1L << t)) == 0) {
                gaps.add(MonitoringGap.term(name, monitor.terms().get(t).name(), "none of the "
                        + BaselineInformation.withheld(acceptedEvents)
                        + " accepted event(s) has a value for it, so every event is left out of the model fit"));
            }
        }
        return gaps;
    }

    /** The stream's false-alarm budget and derived limits, or null while it has no alert engine. */
    org.oddswatch.alerts.engine.FalseAlarmBudget budget() {
        return baseline.budget();
    }

    StreamStatus status() {
        BaselineModel model = baseline.model();
        return new StreamStatus(name, monitor.name(),
                watermark == Long.MIN_VALUE ? null : Instant.ofEpochMilli(watermark),
                lastFinal == null ? null : lastFinal.windowEnd(), finalWindows, baseline.state(),
                baseline.note(), model == null ? null : model.events(), model == null ? null : model.cases(),
                store.bucketCount(), store.approximateBytes(), future.size(), counts.snapshot(), gaps());
    }
}
