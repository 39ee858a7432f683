package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.NavigableMap;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.engine.RuleInputs;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The baseline of one stream and the alert engine that judges its final windows against it.
 *
 * <p>A baseline file (or none) gives the engine at once. A fixed baseline period is accumulated
 * from the stream's own events (into a one-bucket store) and frozen, and the engine made, once the
 * first window of its last bucket is final (no event of the period can still be accepted). Until
 * then complete events after the period and restored alerts wait, and final windows are counted as
 * not judged. States ({@code /status}): {@code none}, {@code file}, {@code accumulating},
 * {@code frozen}, {@code failed}.
 */
final class StreamBaseline {

    private static final String NONE = "none";
    private static final String FILE = "file";
    private static final String ACCUMULATING = "accumulating";
    private static final String FROZEN = "frozen";
    private static final String FAILED = "failed";

    /** A final window as published (with the engine's chart values) and the alerts it gave. */
    record Judged(WindowEstimate published, List<Alert> alerts) {
    }

    private final String stream;
    private final MonitorDefinition monitor;
    private final WindowEstimator estimator;
    private final WindowGeometry geometry;
    private final ReplayHint replayHint;
    /** Where the engine's calls are recorded, or null. */
    private final RuleInputs ruleInputs;

    private AlertEngine engine;
    private BaselineModel model;
    private String state;
    private String note;
    /** Why there is no baseline (failed or unreadable), or {@link GapReason#BASELINE_WEAK}; null otherwise. */
    private GapReason gap;
    private WindowStore periodStore;
    /** Final windows no rule judged: overlapping the fixed baseline period, or before it froze. */
    private long windowsInPeriod;
    private long windowsBeforeFreeze;
    private Instant lastUnjudgedEnd;
    /** Rule gaps while the fixed baseline period is open (no engine yet), computed once. */
    private List<MonitoringGap> pendingRuleGaps;
    /** Complete events after the period, waiting for the engine; null once it exists. */
    private List<DecodedEvent> pending;
    private List<Alert> restored = List.of();

    StreamBaseline(String stream, MonitorDefinition monitor, WindowEstimator estimator, WindowStore periodStore,
                   BaselineModel fileBaseline, String fileBaselineNote, PipelineSettings settings) {
        this.stream = stream;
        this.monitor = monitor;
        this.estimator = estimator;
        this.geometry = monitor.geometry();
        this.replayHint = settings.replayHint();
        this.ruleInputs = settings.ruleInputs();
        BaselineSpec spec = monitor.baseline();
        if (spec != null && spec.isFixedPeriod()) {
            this.periodStore = periodStore;
            this.pending = new ArrayList<>();
            this.state = ACCUMULATING;
        } else {
            this.model = fileBaseline;
            this.note = fileBaselineNote;
            this.state = spec == null ? NONE : fileBaseline != null ? FILE : FAILED;
            this.gap = spec != null && fileBaseline == null ? GapReason.BASELINE_UNREADABLE : null;
            noteWeakness();
            this.engine = newEngine();
        }
    }

    /** The baseline in use (frozen file or fixed period), or null. */
    BaselineModel model() {
        return model;
    }

    String state() {
        return state;
    }

    String note() {
        return note;
    }

    /** Whether an alert engine judges the final windows (false while a fixed baseline period is open). */
    boolean judging() {
        return engine != null;
    }

    List<CusumReading> cusumReadings() {
        return engine.cusumReadings();
    }

    /** An accepted event: into the period's store when in the period, and to the sequential rule when complete. */
    void onAccepted(DecodedEvent event) {
        long time = event.timeMillis();
        if (periodStore != null && inPeriod(time)) {
            periodStore.add(0, event.row(), event.positive(), event.stratum());
        }
        if (event.complete()) {
            if (engine != null) {
                toEngine(event);
            } else if (time >= monitor.baseline().to().toEpochMilli()) {
                pending.add(event); // events of the period itself are never scored against it
            }
        }
    }

    /** Before the windows through end bucket {@code newFinal} are closed: freezes the period once it is complete. */
    void beforeClosing(long newFinal) {
        if (periodStore != null && engine == null
                && newFinal >= geometry.bucketOf(monitor.baseline().to().toEpochMilli() - 1) + 1) {
            freeze();
        }
    }

    /** Judges one final window (one overlapping the period too: the CUSUM reports the events after it per window). */
    Judged judge(WindowEstimate estimate) {
        boolean inPeriod = overlapsPeriod(estimate.windowStart(), estimate.windowEnd());
        if (inPeriod) {
            windowsInPeriod++;
        }
        if (engine != null) {
            if (ruleInputs != null) {
                ruleInputs.window(estimate, inPeriod);
            }
            List<Alert> alerts = inPeriod ? engine.onBaselinePeriodWindow(estimate) : engine.onFinalEstimate(estimate);
            return new Judged(engine.withCharts(estimate), alerts);
        }
        if (!inPeriod) {
            windowsBeforeFreeze++;
            lastUnjudgedEnd = estimate.windowEnd();
        }
        return new Judged(estimate, List.of());
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
     * Continues the CUSUM charts of a baseline file ({@link AlertEngine#resumeCharts}) from the first
     * window wholly within what the rebuild re-reads ({@code rereadFromMillis} on); later windows are
     * then judged as in the uninterrupted run. A fixed period needs nothing: its rebuild re-reads it.
     */
    void resumeCharts(NavigableMap<Instant, List<CusumValue>> published, long rereadFromMillis) {
        if (engine != null && pending == null && rereadFromMillis <= Long.MAX_VALUE - geometry.widthMillis()) {
            engine.resumeCharts(published, rereadFromMillis + geometry.widthMillis());
        }
    }

    private boolean overlapsPeriod(Instant start, Instant stop) {
        BaselineSpec spec = monitor.baseline();
        return spec != null && spec.isFixedPeriod() && start.isBefore(spec.to()) && stop.isAfter(spec.from());
    }

    private boolean inPeriod(long time) {
        BaselineSpec spec = monitor.baseline();
        return time >= spec.from().toEpochMilli() && time < spec.to().toEpochMilli();
    }

    private void freeze() {
        BaselineSpec spec = monitor.baseline();
        try {
            model = estimator.fitBaseline(periodStore.window(0, 1), spec.from().toString(), spec.to().toString(),
                    monitor.checksum());
            state = FROZEN;
            noteWeakness();
        } catch (IllegalArgumentException e) {
            state = FAILED;
            note = e.getMessage();
            gap = GapReason.BASELINE_FAILED;
        }
        pendingRuleGaps = null;
        periodStore = null;
        engine = newEngine();
        if (!restored.isEmpty()) {
            engine.restore(restored);
            restored = List.of();
        }
        for (DecodedEvent event : pending) {
            toEngine(event);
        }
        pending = null;
    }

    private void toEngine(DecodedEvent event) {
        if (ruleInputs != null) {
            ruleInputs.event(stream, event.timeMillis(), event.id(), event.row(), event.positive());
        }
        engine.onEvent(event.timeMillis(), event.id(), event.row(), event.positive());
    }

    /** The engine's false-alarm budget, or null while there is no engine (or no baseline model). */
    org.oddswatch.alerts.engine.FalseAlarmBudget budget() {
        return engine == null ? null : engine.budget();
    }

    /** This stream's alert engine: CUSUM alerts on the window grid, message counts under the small-cell rule. */
    private AlertEngine newEngine() {
        if (ruleInputs != null) {
            ruleInputs.engine(stream, monitor.ruleInputsKey(), model);
        }
        return new AlertEngine(stream, monitor.rules(), model, replayHint, geometry, monitor.outputs().smallCells(),
                monitor.split() == null ? 1 : monitor.split().maxStreams());
    }

    /** Flags a baseline in use that rests on too little information ({@link BaselineInformation}). */
    private void noteWeakness() {
        String weakness = model == null ? null : BaselineInformation.weakness(model);
        if (weakness != null) {
            gap = GapReason.BASELINE_WEAK;
            note = "the baseline model rests on " + weakness;
        }
    }

    /** What the baseline leaves unmonitored: its own problem, the rules that do not run, the windows not judged. */
    List<MonitoringGap> gaps() {
        BaselineSpec spec = monitor.baseline();
        GapReason reason = gap;
        String detail = note;
        if (spec == null) {
            reason = GapReason.NO_BASELINE;
            detail = "the definition has no baseline section";
        } else if (ACCUMULATING.equals(state)) {
            reason = GapReason.BASELINE_PENDING;
            detail = "the baseline period " + spec.from() + " to " + spec.to() + " has not closed yet";
        }
        List<MonitoringGap> gaps = new ArrayList<>();
        if (spec != null && reason != null) {
            gaps.add(MonitoringGap.baseline(stream, reason, detail));
        }
        if (engine == null && pendingRuleGaps == null) {
            pendingRuleGaps = new AlertEngine(stream, monitor.rules(), null, null).gaps(reason, detail);
        }
        gaps.addAll(engine != null ? engine.gaps(reason, detail) : pendingRuleGaps);
        if (windowsInPeriod > 0) {
            gaps.add(MonitoringGap.windows(stream, null, GapReason.BASELINE_PERIOD,
                    AlertEngine.inBaselinePeriod(spec.from(), spec.to()), windowsInPeriod));
        }
        if (windowsBeforeFreeze > 0) {
            gaps.add(MonitoringGap.windows(stream, null, GapReason.BASELINE_PENDING, "the window closed before the "
                    + "baseline period " + spec.from() + " to " + spec.to() + " did (newest: the window ending "
                    + lastUnjudgedEnd + ")", windowsBeforeFreeze));
        }
        return gaps;
    }
}
