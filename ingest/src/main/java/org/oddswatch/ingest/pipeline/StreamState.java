package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.NavigableMap;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * One stream's state: its window store, watermark, the held buckets and their ids (dedupe), its alert
 * engine and, for a fixed-period baseline, the accumulation of the baseline period.
 *
 * <p>Time rules, with buckets of one step, {@code k = width/step} buckets per window and lateness
 * {@code L}: the watermark {@code W} is the largest event time seen; window {@code e} (end bucket)
 * is final when {@code W >= start(e) + L}, so every window with {@code e <= bucketOf(W - L)} is
 * final. An event in bucket {@code b} is late when window {@code b+1} (its first window) is final.
 * Buckets before {@code F + 1 - k} ({@code F} the newest final window) can no longer be part of a
 * window and are dropped, with their ids. Only windows holding at least one event are estimated.
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

    private static final String BASELINE_NONE = "none";
    private static final String BASELINE_FILE = "file";
    private static final String BASELINE_ACCUMULATING = "accumulating";
    private static final String BASELINE_FROZEN = "frozen";
    private static final String BASELINE_FAILED = "failed";

    /** A complete-case event waiting for the alert engine (fixed baseline not frozen yet). */
    private record PendingEvent(long time, String id, double[] row, boolean positive) {
    }

    private final String name;
    private final MonitorDefinition monitor;
    private final WindowEstimator estimator;
    private final WindowGeometry geometry;
    private final int bucketsPerWindow;
    private final FutureHold future;
    private final HeldOutcomes heldOutcomes;
    private final PipelineListener listener;
    private final ReplayHint replayHint;
    private final WindowStore store;
    /** The ids of the events in the store's buckets (the held buckets are the store's own). */
    private final HeldIds heldIds = new HeldIds();
    private final OutcomeCounts counts = new OutcomeCounts();

    private long watermark = Long.MIN_VALUE;
    private long finalThrough = Long.MIN_VALUE;
    private WindowEstimate lastFinal;
    private double[] warmStart;
    private long finalWindows;

    private AlertEngine engine;
    private BaselineModel baseline;
    private String baselineState;
    private String baselineNote;
    /** Why there is no baseline (failed or unreadable), or {@link GapReason#BASELINE_WEAK}; null otherwise. */
    private GapReason baselineGap;
    private WindowStore baselineStore;
    /** Accepted events, and a bit per term (first 64) set once an accepted event had a value for it. */
    private long acceptedEvents;
    private long termsWithValues;
    /** Final windows no rule judged: overlapping the fixed baseline period, or before it froze. */
    private long windowsInBaselinePeriod;
    private long windowsBeforeFreeze;
    private Instant lastUnjudgedEnd;
    /** Rule gaps while the fixed baseline period is open (no engine yet), computed once. */
    private List<MonitoringGap> pendingRuleGaps;
    private List<PendingEvent> pending;
    private List<Alert> restored = List.of();

    StreamState(String name, MonitorDefinition monitor, WindowEstimator estimator, WindowStore store,
                WindowStore baselineStore, BaselineModel fileBaseline, String fileBaselineNote,
                PipelineListener listener, ReplayHint replayHint, HeldOutcomes heldOutcomes) {
        this.name = name;
        this.monitor = monitor;
        this.estimator = estimator;
        this.geometry = monitor.geometry();
        this.bucketsPerWindow = geometry.bucketsPerWindow();
        this.future = new FutureHold(monitor.event());
        this.heldOutcomes = heldOutcomes;
        this.listener = listener;
        this.replayHint = replayHint;
        this.store = store;
        BaselineSpec spec = monitor.baseline();
        if (spec != null && spec.isFixedPeriod()) {
            this.baselineStore = baselineStore;
            this.pending = new ArrayList<>();
            this.baselineState = BASELINE_ACCUMULATING;
        } else {
            this.baseline = fileBaseline;
            this.baselineNote = fileBaselineNote;
            this.baselineState = spec == null ? BASELINE_NONE : fileBaseline != null ? BASELINE_FILE : BASELINE_FAILED;
            this.baselineGap = spec != null && fileBaseline == null ? GapReason.BASELINE_UNREADABLE : null;
            noteWeakness();
            this.engine = newEngine();
        }
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
        if (!heldIds.add(event.id(), bucket)) {
            return RecordOutcome.duplicate("id '" + event.id() + "' already seen");
        }
        try {
            store.add(bucket, event.row(), event.positive(), event.stratum());
        } catch (RuntimeException e) {
            heldIds.remove(event.id()); // not stored, so not held: the same id may come again
            throw e;
        }
        if (baselineStore != null && inBaselinePeriod(time)) {
            baselineStore.add(0, event.row(), event.positive(), event.stratum());
        }
        acceptedEvents++;
        termsWithValues |= ~event.absentTerms();
        if (event.complete()) {
            if (engine != null) {
                engine.onEvent(time, event.id(), event.row(), event.positive());
            } else if (time >= monitor.baseline().to().toEpochMilli()) {
                // After the period, before the freeze (at most the lateness): the sequential rule
                // will need these. Events of the period itself are never scored against it.
                pending.add(new PendingEvent(time, event.id(), event.row(), event.positive()));
            }
        }
        if (time > watermark) {
            watermark = time;
            finalizeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
        }
        return RecordOutcome.ACCEPTED;
    }

    /** Moves the watermark on without an event (idle timeout, live only). */
    void advanceWatermark(long time, boolean suppress) {
        if (time > watermark) {
            watermark = time;
            finalizeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
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
        long newest = store.bucketCount() == 0 ? finalThrough : store.newestBucket();
        finalizeThrough(newest + bucketsPerWindow, false);
        if (engine != null) {
            listener.onCusum(name, engine.cusumReadings());
        }
    }

    /** An interim estimate of the window holding the watermark, unless that window is final. */
    void emitInterim() {
        if (watermark == Long.MIN_VALUE) {
            return;
        }
        long end = geometry.bucketOf(watermark) + 1;
        if (end <= finalThrough) {
            return;
        }
        WindowEstimate estimate = estimator.estimate(name, geometry.windowStart(end), geometry.windowEnd(end),
                WindowStatus.INTERIM, store.window(end - bucketsPerWindow, end), warmStart, baseline);
        listener.onEstimate(estimate);
    }

    /** Open episodes published before a restart; applied when the alert engine exists. */
    void restore(List<Alert> alerts) {
        if (engine != null) {
            engine.restore(alerts);
        } else {
            restored = List.copyOf(alerts);
        }
    }

    /**
     * Continues the CUSUM charts of a stream with a baseline file from the values published with its
     * final windows ({@link AlertEngine#resumeCharts}), from the first window that lies wholly within
     * what the rebuild re-reads: every window ending after it is then estimated and judged as in the
     * uninterrupted run. A fixed-period baseline needs nothing: its rebuild re-reads the period and
     * everything after it.
     *
     * @param rereadFromMillis the earliest event time the rebuild is sure to re-read
     * @return the charts resumed
     */
    int resumeCharts(NavigableMap<Instant, List<CusumValue>> published, long rereadFromMillis) {
        if (engine == null || pending != null || rereadFromMillis > Long.MAX_VALUE - geometry.widthMillis()) {
            return 0;
        }
        return engine.resumeCharts(published, rereadFromMillis + geometry.widthMillis());
    }

    /**
     * Makes every window ending at or before bucket {@code newFinal} final. Events before the start
     * of bucket {@code newFinal} can no longer be accepted (their buckets' first windows are final),
     * so the sequential rule may process them: it sees the same events in the same order whatever
     * the arrival order within the allowed lateness.
     */
    private void finalizeThrough(long newFinal, boolean suppress) {
        if (newFinal > finalThrough) {
            if (baselineStore != null && engine == null && baselineComplete(newFinal)) {
                freezeBaseline();
            }
            long end = finalThrough == Long.MIN_VALUE ? Long.MIN_VALUE : finalThrough + 1;
            while (true) {
                long held = store.oldestBucketFrom(end == Long.MIN_VALUE ? Long.MIN_VALUE : end - bucketsPerWindow);
                if (held == Long.MAX_VALUE) {
                    break;
                }
                end = Math.max(end, held + 1);
                if (end > newFinal) {
                    break;
                }
                finalizeWindow(end, suppress);
                end++;
            }
            finalThrough = newFinal;
            expireBefore(newFinal + 1 - bucketsPerWindow);
            if (engine != null) {
                if (!suppress) {
                    listener.onCusum(name, engine.cusumReadings());
                }
            }
        }
    }

    private void finalizeWindow(long end, boolean suppress) {
        Instant start = geometry.windowStart(end);
        Instant stop = geometry.windowEnd(end);
        long fitStart = System.nanoTime(); // for the fit-duration meter only; never part of the output
        WindowEstimate estimate = estimator.estimate(name, start, stop, WindowStatus.FINAL,
                store.window(end - bucketsPerWindow, end), warmStart, baseline);
        long fitNanos = System.nanoTime() - fitStart;
        warmStart = reproducibleStart(estimator.coefficientVector(estimate));
        lastFinal = estimate;
        finalWindows++;
        boolean inBaselinePeriod = overlapsBaselinePeriod(start, stop);
        if (inBaselinePeriod) {
            windowsInBaselinePeriod++;
        }
        List<Alert> alerts = List.of();
        WindowEstimate published = estimate;
        if (engine != null) {
            // every final window, also those overlapping the baseline period: the engine judges no such
            // window, but the CUSUM reports the events after the period once per final window
            alerts = inBaselinePeriod ? engine.onBaselinePeriodWindow(estimate) : engine.onFinalEstimate(estimate);
            published = engine.withCharts(estimate);
        } else if (!inBaselinePeriod) {
            windowsBeforeFreeze++;
            lastUnjudgedEnd = stop;
        }
        // the estimate (with its chart values) before the window's alerts, as always
        if (!suppress) {
            listener.onEstimate(published);
            listener.onFinalFit(published, fitNanos);
        }
        emitAlerts(alerts, suppress);
    }

    private boolean overlapsBaselinePeriod(Instant start, Instant stop) {
        BaselineSpec spec = monitor.baseline();
        return spec != null && spec.isFixedPeriod() && start.isBefore(spec.to()) && stop.isAfter(spec.from());
    }

    /**
     * The warm start for the next window: the coefficients rounded to single precision. A stream
     * rebuilt after a restart re-estimates its older windows from partly re-read data, so their
     * coefficients can differ from the uninterrupted run's in the last bits; rounding makes the next
     * window start from exactly the same point (unless a coefficient sits within about 1e-16 of a
     * rounding boundary), so its estimate is bit for bit the same. Newton converges from there in
     * the same few steps.
     */
    static double[] reproducibleStart(double[] coefficients) {
        if (coefficients == null) {
            return null;
        }
        double[] start = new double[coefficients.length];
        for (int j = 0; j < start.length; j++) {
            start[j] = (float) coefficients[j];
        }
        return start;
    }

    private void expireBefore(long bucket) {
        store.expireBefore(bucket);
        heldIds.expireBefore(bucket);
    }

    private boolean inBaselinePeriod(long time) {
        BaselineSpec spec = monitor.baseline();
        return time >= spec.from().toEpochMilli() && time < spec.to().toEpochMilli();
    }

    /** No event of the baseline period can still be accepted once its last bucket's first window is final. */
    private boolean baselineComplete(long newFinal) {
        long lastBucket = geometry.bucketOf(monitor.baseline().to().toEpochMilli() - 1);
        return newFinal >= lastBucket + 1;
    }

    private void freezeBaseline() {
        BaselineSpec spec = monitor.baseline();
        try {
            baseline = estimator.fitBaseline(baselineStore.window(0, 1), spec.from().toString(), spec.to().toString(),
                    monitor.checksum());
            baselineState = BASELINE_FROZEN;
            noteWeakness();
        } catch (IllegalArgumentException e) {
            baselineState = BASELINE_FAILED;
            baselineNote = e.getMessage();
            baselineGap = GapReason.BASELINE_FAILED;
        }
        pendingRuleGaps = null;
        baselineStore = null;
        engine = newEngine();
        if (!restored.isEmpty()) {
            engine.restore(restored);
            restored = List.of();
        }
        for (PendingEvent event : pending) {
            engine.onEvent(event.time(), event.id(), event.row(), event.positive());
        }
        pending = null;
    }

    private void emitAlerts(List<Alert> alerts, boolean suppress) {
        if (!suppress) {
            for (Alert alert : alerts) {
                listener.onAlert(alert);
            }
        }
    }

    /** This stream's alert engine: CUSUM alerts on the window grid, message counts under the small-cell rule. */
    private AlertEngine newEngine() {
        return new AlertEngine(name, monitor.rules(), baseline, replayHint, geometry, monitor.outputs().smallCells());
    }

    /** Flags a baseline in use that rests on too little information ({@link BaselineInformation}). */
    private void noteWeakness() {
        String weakness = baseline == null ? null : BaselineInformation.weakness(baseline);
        if (weakness != null) {
            baselineGap = GapReason.BASELINE_WEAK;
            baselineNote = "the baseline model rests on " + weakness;
        }
    }

    /**
     * What is not monitored on this stream: the baseline's problem, the rules that do not run and
     * the windows they did not judge ({@link AlertEngine#gaps}), and the terms no accepted event had
     * a value for.
     */
    List<MonitoringGap> gaps() {
        List<MonitoringGap> gaps = new ArrayList<>();
        GapReason noBaseline;
        String noBaselineDetail;
        if (BASELINE_NONE.equals(baselineState)) {
            noBaseline = GapReason.NO_BASELINE;
            noBaselineDetail = "the definition has no baseline section";
        } else if (BASELINE_ACCUMULATING.equals(baselineState)) {
            noBaseline = GapReason.BASELINE_PENDING;
            noBaselineDetail = "the baseline period " + monitor.baseline().from() + " to " + monitor.baseline().to()
                    + " has not closed yet";
            gaps.add(MonitoringGap.baseline(name, noBaseline, noBaselineDetail));
        } else {
            noBaseline = baselineGap;
            noBaselineDetail = baselineNote;
            if (baselineGap != null) {
                gaps.add(MonitoringGap.baseline(name, baselineGap, baselineNote));
            }
        }
        if (engine != null) {
            gaps.addAll(engine.gaps(noBaseline, noBaselineDetail));
        } else {
            if (pendingRuleGaps == null) {
                pendingRuleGaps = new AlertEngine(name, monitor.rules(), null, null).gaps(noBaseline, noBaselineDetail);
            }
            gaps.addAll(pendingRuleGaps);
        }
        if (windowsInBaselinePeriod > 0) {
            gaps.add(MonitoringGap.windows(name, null, GapReason.BASELINE_PERIOD, AlertEngine.inBaselinePeriod(
                    monitor.baseline().from(), monitor.baseline().to()), windowsInBaselinePeriod));
        }
        if (windowsBeforeFreeze > 0) {
            gaps.add(MonitoringGap.windows(name, null, GapReason.BASELINE_PENDING, "the window closed before the "
                    + "baseline period " + monitor.baseline().from() + " to " + monitor.baseline().to() + " did (newest: "
                    + "the window ending " + lastUnjudgedEnd + ")", windowsBeforeFreeze));
        }
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

    /** The baseline in use (frozen file or fixed period), or null. */
    BaselineModel baseline() {
        return baseline;
    }

    StreamStatus status() {
        return new StreamStatus(name, monitor.name(),
                watermark == Long.MIN_VALUE ? null : Instant.ofEpochMilli(watermark),
                lastFinal == null ? null : lastFinal.windowEnd(), finalWindows, baselineState, baselineNote,
                baseline == null ? null : baseline.events(), baseline == null ? null : baseline.cases(),
                store.bucketCount(), store.approximateBytes(), future.size(), counts.snapshot(), gaps());
    }
}
