package org.oddswatch.alerts.engine;

import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.NavigableMap;
import java.util.TreeMap;
import java.util.function.BiPredicate;
import java.util.function.Function;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.alerts.lifecycle.EpisodeTracker;
import org.oddswatch.alerts.lifecycle.EpisodeTracker.Transition;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.alerts.privacy.SmallCellAlerts;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.rules.BernoulliCusumRule;
import org.oddswatch.alerts.rules.CalibrationRule;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.alerts.rules.InformationGuard;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.alerts.rules.OddsRatioBoundsRule;
import org.oddswatch.alerts.rules.OddsRatioCusumRule;
import org.oddswatch.alerts.rules.OddsRatioDriftRule;
import org.oddswatch.alerts.rules.PendingEvents;
import org.oddswatch.alerts.rules.Reading;
import org.oddswatch.alerts.rules.WindowRule;
import org.oddswatch.alerts.rules.Zone;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.ChartSubject;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.result.DriftValue;
import org.oddswatch.estimator.result.StepCusumValue;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * Runs one stream's alert rules and keeps their episode lifecycle. Pure and deterministic: no clock,
 * no I/O, no randomness; the caller feeds final window estimates and scored events in event time.
 * One instance per stream; not thread-safe.
 *
 * <p>Rules needing the baseline (drift, calibration, CUSUM) stay silent without one; the bounds rule
 * runs regardless. Interim estimates are ignored, and so is every window overlapping the baseline's
 * own period (its events are not new information against it), as are CUSUM events inside it.
 */
public final class AlertEngine {

    private final String stream;
    private final BaselineModel baseline;
    private final ReplayHint replay;
    private final List<WindowRule> windowRules = new ArrayList<>();
    private final BernoulliCusumRule cusum;
    private final OddsRatioCusumRule scoreCusum;
    /** The events both CUSUM rules take, held once for both until their time closes (null without a CUSUM). */
    private final PendingEvents events;
    private final FalseAlarmBudget budget;
    private final EpisodeTracker tracker;
    private final Map<String, Alert> lastByKey = new LinkedHashMap<>();
    private final long baselineFrom;
    private final long baselineTo;
    /** The chart values of the latest final window: its end, the drift statistics (the CUSUM's are in the rule). */
    private Instant chartsEnd;
    private final List<DriftValue> drift = new ArrayList<>();
    private final RuleGaps gaps;
    /** The small-cell rule, and what it withholds of the final window being judged (its alerts withhold the same). */
    private final SmallCellPolicy cells;
    private SmallCellPolicy.Withheld windowCells;

    /**
     * @param stream the stream name
     * @param rules the rule settings from the monitor definition (null: {@link AlertRulesConfig#defaults()})
     * @param baseline the frozen or trailing baseline model, or null (rules needing it stay silent)
     * @param replay how to phrase the replay command in alert texts (null: placeholders)
     */
    public AlertEngine(String stream, AlertRulesConfig rules, BaselineModel baseline, ReplayHint replay) {
        this(stream, rules, baseline, replay, null, SmallCellPolicy.DEFAULT);
    }

    /**
     * @param grid the stream's window grid: CUSUM alerts carry whole buckets, never an event's own
     *     time (null: event times, for tests of the rules)
     * @param cells the small-cell rule for counts named in messages
     */
    public AlertEngine(String stream, AlertRulesConfig rules, BaselineModel baseline, ReplayHint replay,
                       WindowGeometry grid, SmallCellPolicy cells) {
        this(stream, rules, baseline, replay, grid, cells, 1);
    }

    /**
     * @param streams the monitor's streams its false-alarm budget is shared by (its split's
     *     {@code maxStreams}, 1 without a split); limits the definition leaves out come from
     *     {@link FalseAlarmBudget}
     */
    public AlertEngine(String stream, AlertRulesConfig rules, BaselineModel baseline, ReplayHint replay,
                       WindowGeometry grid, SmallCellPolicy cells, int streams) {
        this.stream = stream;
        this.cells = cells == null ? SmallCellPolicy.DEFAULT : cells;
        this.baseline = baseline;
        this.replay = replay == null ? new ReplayHint(null, null, null) : replay;
        this.tracker = new EpisodeTracker(stream);
        AlertRulesConfig r = rules == null ? AlertRulesConfig.defaults() : rules;
        this.gaps = new RuleGaps(stream, r);
        this.budget = baseline == null ? null : FalseAlarmBudget.derive(r, baseline, grid, streams);
        if (baseline != null && r.oddsRatioDrift() != null) {
            windowRules.add(new OddsRatioDriftRule(r.oddsRatioDrift(),
                    gaps.guard(OddsRatioDriftRule.NAME, r.guardFor(r.oddsRatioDrift().guard())), baseline));
        }
        if (r.oddsRatioBounds() != null) {
            windowRules.add(new OddsRatioBoundsRule(r.oddsRatioBounds(),
                    gaps.guard(OddsRatioBoundsRule.NAME, r.guardFor(r.oddsRatioBounds().guard()))));
        }
        if (baseline != null && r.calibration() != null) {
            // band ends the definition leaves out come from the budget
            windowRules.add(new CalibrationRule(budget.calibration(),
                    gaps.guard(CalibrationRule.NAME, r.guardFor(r.calibration().guard())), baseline.events()));
        }
        boolean withCusum = baseline != null && r.cusum() != null;
        boolean withScoreCusum = baseline != null && r.oddsRatioCusum() != null && !budget.scoreCharts().isEmpty();
        events = withCusum || withScoreCusum ? new PendingEvents(baseline) : null;
        cusum = withCusum
                ? new BernoulliCusumRule(AlertRulesConfig.withLimit(r.cusum(), budget.cusumLimit()),
                        new InformationGuard(r.guardFor(r.cusum().guard())), baseline, grid, cells, events)
                : null;
        if (withScoreCusum) {
            List<Integer> columns = new ArrayList<>(budget.scoreCharts().keySet());
            columns.sort(null);
            scoreCusum = new OddsRatioCusumRule(baseline, columns, columns.stream().map(budget.scoreCharts()::get).toList(),
                    gaps.guard(OddsRatioCusumRule.NAME, r.guardFor(r.oddsRatioCusum().guard())),
                    r.oddsRatioCusum().clearAfter(), r.oddsRatioCusum().clearFraction(), events);
        } else {
            scoreCusum = null;
        }
        baselineFrom = baseline == null ? Long.MAX_VALUE : parse(baseline.periodStart(), Long.MAX_VALUE);
        baselineTo = baseline == null ? Long.MIN_VALUE : parse(baseline.periodEnd(), Long.MIN_VALUE);
    }

    private static long parse(String instant, long fallback) {
        try {
            return instant == null ? fallback : Instant.parse(instant).toEpochMilli();
        } catch (DateTimeParseException e) {
            return fallback;
        }
    }

    /**
     * One final window: the window rules (odds-ratio drift and bounds, calibration) on its estimate,
     * unless it overlaps the baseline's period, then the CUSUM's report on the events before the
     * window's end (see {@link BernoulliCusumRule#report}). Every final window of the stream must come
     * here, in order, including those overlapping the baseline period: the CUSUM reports once per
     * final window, so at most one message per episode and window results.
     */
    public List<Alert> onFinalEstimate(WindowEstimate estimate) {
        if (estimate.status() != WindowStatus.FINAL || !stream.equals(estimate.stream())) {
            return List.of();
        }
        List<Alert> out = new ArrayList<>();
        startCharts(estimate);
        if (overlapsBaseline(estimate.windowStart().toEpochMilli(), estimate.windowEnd().toEpochMilli())) {
            if (!windowRules.isEmpty()) {
                gaps.unjudged(null, GapReason.BASELINE_PERIOD, estimate.windowEnd(), inBaselinePeriod(baseline.periodStart(),
                        baseline.periodEnd()));
            }
        } else {
            for (WindowRule rule : windowRules) {
                for (Reading reading : rule.evaluate(estimate)) {
                    if (reading.zone() == Zone.UNKNOWN) {
                        gaps.unknown(rule.name(), estimate, reading);
                    } else if (OddsRatioDriftRule.NAME.equals(rule.name()) && reading.evidence() != null
                            && reading.evidence().z() != null) {
                        drift.add(new DriftValue(rule.name(), new ChartSubject(reading.subject().term(),
                                reading.subject().level()), reading.evidence().z()));
                    }
                    publishable(reading, out);
                }
            }
        }
        cusumReport(estimate, out);
        return out;
    }

    /**
     * A final window that the caller counts as overlapping the fixed baseline period itself (so no
     * window rule judges it and it is not counted here again): only the CUSUM's report on the events
     * before the window's end, which keeps its once-per-final-window rhythm.
     */
    public List<Alert> onBaselinePeriodWindow(WindowEstimate estimate) {
        if (estimate.status() != WindowStatus.FINAL || !stream.equals(estimate.stream())) {
            return List.of();
        }
        List<Alert> out = new ArrayList<>();
        startCharts(estimate);
        cusumReport(estimate, out);
        return out;
    }

    private void startCharts(WindowEstimate estimate) {
        chartsEnd = estimate.windowEnd();
        drift.clear();
        windowCells = cells.assess(estimate);
    }

    /**
     * The final estimate with what charts need, as the rules computed it for this window in the
     * latest {@link #onFinalEstimate} or {@link #onBaselinePeriodWindow}: the drift statistic
     * {@code z} of each watched coefficient the drift rule judged, and every CUSUM chart's value at the
     * window's end and its largest value since the previous final window's end. An estimate the
     * engine has not just judged, or one without such values, comes back unchanged.
     */
    public WindowEstimate withCharts(WindowEstimate estimate) {
        if (estimate.status() != WindowStatus.FINAL || !estimate.windowEnd().equals(chartsEnd)
                || !stream.equals(estimate.stream())) {
            return estimate;
        }
        List<CusumValue> cusumValues = cusum == null ? List.of() : cusum.reportedValues();
        List<StepCusumValue> stepValues = scoreCusum == null ? List.of() : scoreCusum.reportedValues();
        if (drift.isEmpty() && cusumValues.isEmpty() && stepValues.isEmpty()) {
            return estimate;
        }
        return estimate.withCharts(drift, cusumValues, stepValues);
    }

    private void cusumReport(WindowEstimate estimate, List<Alert> out) {
        if (scoreCusum != null) {
            for (Reading reading : scoreCusum.report(estimate.windowEnd())) {
                if (reading.zone() == Zone.UNKNOWN && reading.events() > 0) {
                    // a step without new events (inside the baseline period, or a silent stream) is no gap of this rule
                    gaps.unjudged(OddsRatioCusumRule.NAME, GapReason.TOO_FEW_EVENTS, estimate.windowEnd(),
                            reading.detail());
                }
                publishable(reading, out);
            }
        }
        if (cusum != null) {
            for (Reading reading : cusum.report(estimate.windowEnd())) {
                publishable(reading, out);
            }
        }
    }

    /** Why no rule judges a window overlapping the baseline period, in words. */
    public static String inBaselinePeriod(Object from, Object to) {
        return "the window overlaps the baseline period " + from + " to " + to
                + ", whose events are the baseline itself";
    }

    /**
     * What this stream's rules do not monitor: every rule that is off (switched off in the
     * definition, or needing a baseline the stream does not have), then the final windows each
     * running rule did not judge, by reason, with the newest reason in words.
     *
     * @param noBaseline why the stream has no baseline, when it has none (for example
     *     {@link GapReason#BASELINE_FAILED}); ignored when it has one
     * @param noBaselineDetail the same in words
     */
    public List<MonitoringGap> gaps(GapReason noBaseline, String noBaselineDetail) {
        return gaps.list(baseline != null, noBaseline, noBaselineDetail);
    }

    private boolean overlapsBaseline(long from, long to) {
        return from < baselineTo && to > baselineFrom;
    }

    /**
     * Buffers one accepted complete-case event for the sequential (CUSUM) rules, once for both (a
     * {@link PendingEvents} they share). Events are processed only when their bucket closes, in
     * (event time, id) order, so arrival order within the allowed lateness does not matter.
     *
     * @param row the coded design row (intercept first)
     */
    public void onEvent(long eventTimeMillis, String id, double[] row, boolean positive) {
        if (eventTimeMillis >= baselineFrom && eventTimeMillis < baselineTo) {
            return;
        }
        if (events != null) {
            events.add(eventTimeMillis, id, row, positive);
        }
    }

    /** How the false-alarm budget was split and the limits it gave this stream (null without a baseline). */
    public FalseAlarmBudget budget() {
        return budget;
    }

    /** Current CUSUM chart values (empty without a CUSUM), for meters. */
    public List<CusumReading> cusumReadings() {
        return cusum == null ? List.of() : cusum.readings();
    }

    /** The latest message of every episode still open, in first-seen order (for gauges after a restart). */
    public List<Alert> openEpisodes() {
        return lastByKey.values().stream().filter(a -> a.state() != AlertState.CLEARED).toList();
    }

    /**
     * Restores open episodes from alerts previously published (read back from the alerts topic or
     * file), so a restart neither forgets an open episode nor publishes it again. Alerts of other
     * streams are ignored; per rule and subject, the alert with the latest window end (a clearing
     * after a raise or continuation of the same window) decides whether the episode is open, whatever
     * the list's order (an alerts topic keyed by episode id spreads one rule's episodes over
     * partitions). Afterwards, a reading ending at or before the last published window of its rule
     * and subject is not published again. Chart values are not restored: they are a function of the
     * events, which the rebuild re-feeds.
     */
    public void restore(List<Alert> published) {
        List<Alert> mine = published.stream().filter(a -> stream.equals(a.stream()))
                .sorted(Comparator.comparing(Alert::windowEnd).thenComparing(a -> a.state().ordinal()))
                .toList();
        for (Alert a : mine) {
            String key = Reading.key(a.rule(), a.subject());
            Integer run = a.evidence() == null ? null : a.evidence().consecutiveWindows();
            tracker.restore(key, a.id(), a.state() != AlertState.CLEARED, a.windowEnd(), run == null ? 0 : run);
            lastByKey.put(key, a);
        }
    }

    /**
     * Continues the CUSUM charts after a restart from the chart state published with this stream's
     * final estimates (read back from the estimates topic: {@code cusum} for the Bernoulli charts,
     * {@code stepCusum} for the odds-ratio step charts): each chart from the earliest window ending at
     * or after {@code notBeforeMillis} whose entry for it is complete ({@link BernoulliCusumRule#resume},
     * {@link OddsRatioCusumRule#resume}). The caller re-feeds every event at or after
     * {@code notBeforeMillis}; the charts then give the uninterrupted run's values, readings and
     * messages for every window after the one they resumed from. Call before any event. A chart
     * without such an entry starts at 0 with the events re-fed, as before.
     *
     * @param published this stream's published final estimates by window end (their chart values are read)
     * @return the charts resumed
     */
    public int resumeCharts(NavigableMap<Instant, WindowEstimate> published, long notBeforeMillis) {
        int resumed = 0;
        List<Reading> readings = new ArrayList<>();
        if (cusum != null) {
            NavigableMap<Instant, List<CusumValue>> values = charts(published, WindowEstimate::cusum);
            resumed += resume(values, notBeforeMillis, cusum::resume);
            readings.addAll(cusum.publishedReadings(values));
        }
        if (scoreCusum != null) {
            NavigableMap<Instant, List<StepCusumValue>> values = charts(published, WindowEstimate::stepCusum);
            resumed += resume(values, notBeforeMillis, scoreCusum::resume);
            readings.addAll(scoreCusum.publishedReadings(values));
        }
        // the windows a resumed chart will not read again: their readings after the newest message
        // restored bring the episode runs to where they stood (they publish nothing: any message they
        // would give was published then)
        readings.sort(Comparator.comparing(Reading::windowEnd));
        for (Reading reading : readings) {
            Instant upTo = tracker.publishedUpTo(reading.key());
            if (upTo == null || reading.windowEnd().isAfter(upTo)) {
                tracker.step(reading);
            }
        }
        return resumed;
    }

    /** Offers a rule each value of the windows ending at or after {@code notBeforeMillis}, in window order; the charts resumed. */
    private static <T> int resume(NavigableMap<Instant, List<T>> values, long notBeforeMillis,
                                  BiPredicate<Instant, T> resume) {
        int resumed = 0;
        for (Map.Entry<Instant, List<T>> e : values.tailMap(Instant.ofEpochMilli(notBeforeMillis), true).entrySet()) {
            for (T value : e.getValue()) {
                resumed += resume.test(e.getKey(), value) ? 1 : 0;
            }
        }
        return resumed;
    }

    /** One kind of chart value of the estimates, by window end (windows without it left out). */
    private static <T> NavigableMap<Instant, List<T>> charts(NavigableMap<Instant, WindowEstimate> estimates,
                                                             Function<WindowEstimate, List<T>> kind) {
        NavigableMap<Instant, List<T>> out = new TreeMap<>();
        estimates.forEach((end, e) -> {
            if (kind.apply(e) != null) {
                out.put(end, kind.apply(e));
            }
        });
        return out;
    }

    private void publishable(Reading reading, List<Alert> out) {
        Transition t = tracker.step(reading);
        if (t == null || t.alreadyPublished()) {
            return;
        }
        String command = replay.command(reading.windowStart(), reading.windowEnd(), "replay-" + t.id());
        boolean cleared = t.state() == AlertState.CLEARED;
        Measurement m = reading.measurement();
        Measurement.Side side = cleared ? Measurement.Side.WITHIN : m.side();
        String withheld = SmallCellAlerts.reason(reading.rule(), reading.events(), windowCells, cells);
        String message = withheld == null
                ? AlertText.compose(stream, reading, t.state(), t.run(), side, baselineLabel(), command)
                : AlertText.composeWithheld(stream, reading, t.state(), t.run(), cells.count(reading.events()), withheld,
                        baselineLabel(), command);
        Double limit = cleared ? reading.clearLimit() : reading.limit();
        Evidence e = reading.evidence();
        Integer run = cleared ? null : t.run();
        Evidence evidence = e == null ? new Evidence(null, null, null, null, run)
                : new Evidence(e.z(), e.cusum(), e.lower(), e.upper(), run);
        Alert alert = new Alert(t.id(), stream, reading.rule(), reading.subject(), t.state(), reading.windowStart(),
                reading.windowEnd(), m.measure(), m.value(), side, reading.observed(), reading.baseline(), limit,
                reading.clearLimit(), evidence, reading.events(), message, command);
        if (withheld != null) {
            alert = SmallCellAlerts.withhold(alert, withheld);
        }
        lastByKey.put(reading.key(), alert);
        out.add(alert);
    }

    private String baselineLabel() {
        if (baseline == null) {
            return "none";
        }
        return "the model fitted on " + (baseline.periodStart() == null ? "?" : baseline.periodStart()) + " to "
                + (baseline.periodEnd() == null ? "?" : baseline.periodEnd()) + " (" + Format.count(baseline.events())
                + " events, " + Format.count(baseline.cases()) + " positives"
                + (baseline.definitionChecksum() == null ? "" : ", definition " + baseline.definitionChecksum()) + ")";
    }
}
