package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
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
 * <p>An event later than {@code W + maxFutureSkew} is rejected {@code too-far-in-future} and leaves
 * {@code W} alone, unless it completes a run of {@code futureConfirm} consecutive such events
 * spanning at most {@code maxFutureSkew} (a new time frontier after a quiet spell, not a typo): it
 * is then accepted and moves {@code W}. An event within the horizon ends the run.
 */
final class StreamState {

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
    private final long maxFutureSkewMillis;
    private final int futureConfirm;
    private final PipelineListener listener;
    private final ReplayHint replayHint;
    private final WindowStore store;
    /** The ids of the events in the store's buckets (the held buckets are the store's own). */
    private final HeldIds heldIds = new HeldIds();
    private final OutcomeCounts counts = new OutcomeCounts();

    private long watermark = Long.MIN_VALUE;
    /** The run of consecutive events beyond the horizon: how many, and their earliest and latest time. */
    private int futureRun;
    private long futureRunMin;
    private long futureRunMax;
    private long finalThrough = Long.MIN_VALUE;
    private WindowEstimate lastFinal;
    private double[] warmStart;
    private long finalWindows;

    private AlertEngine engine;
    private BaselineModel baseline;
    private String baselineState;
    private String baselineNote;
    private WindowStore baselineStore;
    private List<PendingEvent> pending;
    private List<Alert> restored = List.of();

    StreamState(String name, MonitorDefinition monitor, WindowEstimator estimator, WindowStore store,
                WindowStore baselineStore, BaselineModel fileBaseline, String fileBaselineNote,
                PipelineListener listener, ReplayHint replayHint) {
        this.name = name;
        this.monitor = monitor;
        this.estimator = estimator;
        this.geometry = monitor.geometry();
        this.bucketsPerWindow = geometry.bucketsPerWindow();
        this.maxFutureSkewMillis = monitor.event().maxFutureSkew().toMillis();
        this.futureConfirm = monitor.event().futureConfirm();
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
            this.engine = new AlertEngine(name, monitor.rules(), baseline, replayHint);
        }
    }

    String name() {
        return name;
    }

    long watermark() {
        return watermark;
    }

    OutcomeCounts counts() {
        return counts;
    }

    /** Applies time rules and dedupe to one decoded event and, when accepted, stores it. */
    RecordOutcome offer(DecodedEvent event, boolean suppress) {
        long time = event.timeMillis();
        long bucket = geometry.bucketOf(time);
        if (watermark != Long.MIN_VALUE) {
            if (time - watermark > maxFutureSkewMillis) {
                if (!confirmsNewFrontier(time)) {
                    return RecordOutcome.rejected(RejectReason.TOO_FAR_IN_FUTURE, Instant.ofEpochMilli(time)
                            + " is more than " + monitor.event().maxFutureSkew() + " after the watermark "
                            + Instant.ofEpochMilli(watermark) + " (event " + futureRun + " of the " + futureConfirm
                            + " within " + monitor.event().maxFutureSkew() + " of each other that resume the stream)");
                }
            } else {
                futureRun = 0;
            }
            if (geometry.isFinal(bucket + 1, watermark)) {
                return RecordOutcome.late("the window ending " + geometry.windowEnd(bucket + 1)
                        + " is final (watermark " + Instant.ofEpochMilli(watermark) + ")");
            }
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

    /**
     * One more event beyond {@code watermark + maxFutureSkew}: it joins the current run when the run
     * stays within {@code maxFutureSkew} from its earliest to its latest event, else starts a new
     * run. True when the run reaches {@code futureConfirm} events (a consistent new time frontier,
     * not a lone typo such as a wrong year): this event is then accepted and moves the watermark.
     */
    private boolean confirmsNewFrontier(long time) {
        if (futureRun > 0 && Math.max(futureRunMax, time) - Math.min(futureRunMin, time) <= maxFutureSkewMillis) {
            futureRun++;
            futureRunMin = Math.min(futureRunMin, time);
            futureRunMax = Math.max(futureRunMax, time);
        } else {
            futureRun = 1;
            futureRunMin = time;
            futureRunMax = time;
        }
        if (futureRun >= futureConfirm) {
            futureRun = 0;
            return true;
        }
        return false;
    }

    /** Moves the watermark on without an event (idle timeout, live only). */
    void advanceWatermark(long time, boolean suppress) {
        if (time > watermark) {
            watermark = time;
            finalizeThrough(geometry.bucketOf(watermark - geometry.latenessMillis()), suppress);
        }
    }

    /** End of input: every window that holds events becomes final. */
    void closeAll() {
        long newest = store.bucketCount() == 0 ? finalThrough : store.newestBucket();
        finalizeThrough(newest + bucketsPerWindow, false);
        if (engine != null) {
            emitAlerts(engine.onEventsClosed(Long.MAX_VALUE), false);
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
                emitAlerts(engine.onEventsClosed(geometry.bucketStart(newFinal)), suppress);
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
        if (!suppress) {
            listener.onEstimate(estimate);
            listener.onFinalFit(estimate, fitNanos);
        }
        if (engine != null) {
            // every final window, also those overlapping the baseline period: the engine judges no such
            // window, but the CUSUM reports the events after the period once per final window
            emitAlerts(engine.onFinalEstimate(estimate), suppress);
        }
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
        } catch (IllegalArgumentException e) {
            baselineState = BASELINE_FAILED;
            baselineNote = e.getMessage();
        }
        baselineStore = null;
        engine = new AlertEngine(name, monitor.rules(), baseline, replayHint);
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

    /** The baseline in use (frozen file or fixed period), or null. */
    BaselineModel baseline() {
        return baseline;
    }

    StreamStatus status() {
        return new StreamStatus(name, monitor.name(),
                watermark == Long.MIN_VALUE ? null : Instant.ofEpochMilli(watermark),
                lastFinal == null ? null : lastFinal.windowEnd(), finalWindows, baselineState, baselineNote,
                store.bucketCount(), store.approximateBytes(), counts.snapshot());
    }
}
