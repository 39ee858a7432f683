package org.oddswatch.ingest.pipeline;

import java.io.IOException;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.NavigableMap;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.gaps.BaselineInformation;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * The baseline of one stream and the alert engine that judges its final windows against it. A
 * baseline file (or none) gives the engine at once; a file of the stream's own that cannot be read
 * leaves it without a baseline, the reason its note. A fixed baseline period is accumulated from
 * the stream's events and frozen, and the engine made, once the first window of the period's last
 * bucket is final; until then complete events after the period and restored alerts wait. States
 * ({@code /status}): {@code none}, {@code file}, {@code accumulating}, {@code frozen}, {@code failed}.
 */
final class StreamBaseline {

    /** A final window as published (with the engine's chart values) and the alerts it gave. */
    record Judged(WindowEstimate published, List<Alert> alerts) {
    }

    private final String stream;
    private final MonitorDefinition monitor;
    private final BaselineSpec spec; // or null
    private final WindowEstimator estimator;
    private final WindowGeometry geometry;
    private final PipelineSettings settings;

    private AlertEngine engine; // null while the fixed period accumulates
    private BaselineModel model;
    private String state;
    private String note;
    /** Why there is no baseline (failed or unreadable), or {@link GapReason#BASELINE_WEAK}; null otherwise. */
    private GapReason gap;
    private WindowStore periodStore; // the fixed period's events until it freezes
    /** Final windows no rule judged: overlapping the fixed period, or closed before it froze. */
    private long windowsInPeriod;
    private long windowsBeforeFreeze;
    private Instant lastUnjudgedEnd;
    private List<MonitoringGap> pendingRuleGaps; // while the fixed period accumulates, computed once
    /** Complete events after the fixed period, waiting for the engine; null once it exists. */
    private List<DecodedEvent> pending;
    private List<Alert> restored = List.of();

    StreamBaseline(MonitorRoute route, String stream, String splitValue, PipelineSettings settings) {
        this.stream = stream;
        this.monitor = route.monitor;
        this.spec = monitor.baseline();
        this.estimator = route.estimator;
        this.geometry = monitor.geometry();
        this.settings = settings;
        if (spec != null && spec.isFixedPeriod()) {
            periodStore = route.newStore();
            pending = new ArrayList<>();
            state = "accumulating";
            return;
        }
        model = route.sharedBaseline;
        if (spec != null && model == null) {
            Path file = spec.fileFor(monitor.definitionDir(), splitValue);
            try {
                model = route.readBaseline(file);
            } catch (IOException | RuntimeException e) {
                note = "cannot read baseline file " + file + ": " + e.getMessage();
                gap = GapReason.BASELINE_UNREADABLE;
            }
        }
        state = spec == null ? "none" : model != null ? "file" : "failed";
        noteWeakness();
        engine = newEngine();
    }

    /** The baseline in use (file or frozen period), or null. */
    BaselineModel model() {
        return model;
    }

    String state() {
        return state;
    }

    String note() {
        return note;
    }

    /** Whether an alert engine judges the final windows (false while a fixed period accumulates). */
    boolean judging() {
        return engine != null;
    }

    List<CusumReading> cusumReadings() {
        return engine.cusumReadings();
    }

    /** An accepted event: into the period's store when in the period; to the sequential rules when complete. */
    void onAccepted(DecodedEvent event) {
        long time = event.timeMillis();
        if (periodStore != null && time >= spec.from().toEpochMilli() && time < spec.to().toEpochMilli()) {
            periodStore.add(0, event.row(), event.positive(), event.stratum());
        }
        if (event.complete()) {
            if (engine != null) {
                toEngine(event);
            } else if (time >= spec.to().toEpochMilli()) {
                pending.add(event); // events of the period itself are never scored against it
            }
        }
    }

    /** Before the windows through end bucket {@code newFinal} are closed: freezes the period once it is complete. */
    void beforeClosing(long newFinal) {
        if (engine == null && newFinal >= geometry.bucketOf(spec.to().toEpochMilli() - 1) + 1) {
            freeze();
        }
    }

    /** Judges one final window (a window overlapping the period too: the CUSUM takes the events after it). */
    Judged judge(WindowEstimate estimate) {
        boolean inPeriod = spec != null && spec.isFixedPeriod() && estimate.windowStart().isBefore(spec.to())
                && estimate.windowEnd().isAfter(spec.from());
        if (inPeriod) {
            windowsInPeriod++;
        }
        if (engine != null) {
            if (settings.ruleInputs() != null) {
                settings.ruleInputs().window(estimate, inPeriod);
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

    /** Continues the CUSUM charts from the first window the rebuild re-reads whole (a fixed period is re-read). */
    void resumeCharts(NavigableMap<Instant, WindowEstimate> published, long rereadFromMillis) {
        if (engine != null && rereadFromMillis <= Long.MAX_VALUE - geometry.widthMillis()) {
            engine.resumeCharts(published, rereadFromMillis + geometry.widthMillis());
        }
    }

    private void freeze() {
        try {
            model = estimator.fitBaseline(periodStore.window(0, 1), spec.from().toString(), spec.to().toString(),
                    monitor.checksum());
            state = "frozen";
            noteWeakness();
        } catch (IllegalArgumentException e) {
            state = "failed";
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
        pending.forEach(this::toEngine);
        pending = null;
    }

    private void toEngine(DecodedEvent event) {
        if (settings.ruleInputs() != null) {
            settings.ruleInputs().event(stream, event.timeMillis(), event.id(), event.row(), event.positive());
        }
        engine.onEvent(event.timeMillis(), event.id(), event.row(), event.positive());
    }

    /** The engine's false-alarm budget, or null while there is no engine (or no baseline model). */
    org.oddswatch.alerts.engine.FalseAlarmBudget budget() {
        return engine == null ? null : engine.budget();
    }

    /** This stream's alert engine, its calls recorded when the replay keeps the rule inputs. */
    private AlertEngine newEngine() {
        if (settings.ruleInputs() != null) {
            settings.ruleInputs().engine(stream, monitor.ruleInputsKey(), model);
        }
        return monitor.alertEngine(stream, model, settings.replayHint());
    }

    /** Flags a baseline that rests on too little information ({@link BaselineInformation}). */
    private void noteWeakness() {
        String weakness = model == null ? null : BaselineInformation.weakness(model);
        if (weakness != null) {
            gap = GapReason.BASELINE_WEAK;
            note = "the baseline model rests on " + weakness;
        }
    }

    /** What the baseline leaves unmonitored: its own problem, the rules that do not run, the windows not judged. */
    List<MonitoringGap> gaps() {
        GapReason reason = gap;
        String detail = note;
        if (spec == null) {
            reason = GapReason.NO_BASELINE;
            detail = "the definition has no baseline section";
        } else if (engine == null) {
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
