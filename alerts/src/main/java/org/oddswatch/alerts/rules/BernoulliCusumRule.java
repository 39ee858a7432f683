package org.oddswatch.alerts.rules;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * Risk-adjusted Bernoulli CUSUM (Steiner, Cook, Farewell &amp; Treasure 2000, <i>Biostatistics</i>
 * 1:441) of each event against the baseline model. With {@code p = BaselineModel.risk(row)} and the
 * odds multiplier {@code R} the chart is tuned to, each event adds the log-likelihood ratio
 * {@code W = y ln R - ln(1 - p + R p)} and {@code S = max(0, S + W)}; the chart signals when
 * {@code S > h}. One chart tests {@code R_up > 1} ({@code bernoulli-cusum-up}), one
 * {@code R_down < 1} ({@code bernoulli-cusum-down}), over all events (subject {@code calibration})
 * and, when configured, over the events whose indicator of a watched term is 1 (subject that term).
 *
 * <p>Order and determinism: {@link #offer} only buffers (in a {@link PendingEvents} the rule may share
 * with the {@link OddsRatioCusumRule} of the same stream); {@link #close} processes the buffered
 * events with time before the closing time, sorted by (event time, id), so arrival order within the
 * allowed lateness does not matter. An event offered after its time was closed is processed with
 * the next close, in its sorted place among those events. A signal restarts the chart at 0, so each
 * later signal rests on fresh evidence and the run-length theory applies again.
 *
 * <p>Reporting: {@link #report} is called once per final window, with the window's end. It first
 * closes the events before that end, then gives one reading per chart about the events since the
 * previous report: {@link Zone#BEYOND} when the chart signalled at least once (value: the highest
 * statistic at a signal; window: from the first event after the chart last stood at 0 before the
 * first of these signals, the usual CUSUM change-point estimate, to the window's end);
 * {@link Zone#INSIDE} when it did not signal and stands below {@code clearFraction · h};
 * {@link Zone#BETWEEN} when it did not signal but stands at or above that; {@link Zone#UNKNOWN}
 * when the chart saw no event since the previous report, or fewer than the guard's
 * {@code minEvents} events in all (it does not signal before). So the lifecycle sends at most one
 * message per chart and final window, and an episode clears only after {@code clearAfter} final
 * windows in a row without a signal, each ending with the chart below the clear limit.
 *
 * <p>The charts' values and the readings are a function of the events before each report's time
 * alone (no episode state is kept here), so a rebuild that re-feeds the same events reproduces them
 * exactly. A rebuild that re-feeds only the newer events instead {@link #resume resumes} each chart
 * from the values published with a final window ({@link #reportedValues}): the chart then takes no
 * event before that window's end and gives no reading for a window ending at or before it, so from
 * there on it is a function of the values resumed and the events after that window's end.
 *
 * <p>Published times and counts: an alert's window runs from the start of the bucket holding the
 * excursion's first event to the final window's end, so no event's own time is published; counts in
 * the message follow the {@link SmallCellPolicy} (a count from 1 to 4 reads {@code <5}, and the
 * positives and their observed/expected ratio are withheld when the positives or the negatives are
 * that small).
 */
public final class BernoulliCusumRule {

    public static final String UP = "bernoulli-cusum-up";
    public static final String DOWN = "bernoulli-cusum-down";

    private final BaselineModel baseline;
    private final WindowGeometry grid;
    private final SmallCellPolicy cells;
    private final int clearAfter;
    private final double clearFraction;
    private final long minEvents;
    private final List<BernoulliChart> charts = new ArrayList<>();
    private final PendingEvents pending;
    private long lastReportEnd = Long.MIN_VALUE;
    private List<CusumValue> lastValues = List.of();

    public BernoulliCusumRule(Cusum settings, InformationGuard guard, BaselineModel baseline) {
        this(settings, guard, baseline, null, SmallCellPolicy.DEFAULT);
    }

    /**
     * @param grid the stream's window grid: an alert's window starts at a bucket's start (never an
     *     exact event time is published); null keeps the event times (for tests of the chart)
     * @param cells the small-cell rule for the counts the message names
     */
    public BernoulliCusumRule(Cusum settings, InformationGuard guard, BaselineModel baseline, WindowGeometry grid,
                              SmallCellPolicy cells) {
        this(settings, guard, baseline, grid, cells, new PendingEvents(baseline));
    }

    /**
     * @param events the buffer the rule takes its events from, shared with the stream's other
     *     sequential rule: events go into it once ({@link PendingEvents#add}), not through {@link #offer}
     */
    public BernoulliCusumRule(Cusum settings, InformationGuard guard, BaselineModel baseline, WindowGeometry grid,
                              SmallCellPolicy cells, PendingEvents events) {
        this.grid = grid;
        this.cells = cells;
        this.baseline = baseline;
        this.clearAfter = settings.clearAfter();
        this.clearFraction = settings.clearFraction();
        this.minEvents = guard.minEvents();
        addPair(AlertSubject.calibration(), -1, settings);
        List<Column> columns = baseline.columns();
        for (TermLimits t : settings.terms()) {
            for (int j = 0; j < columns.size(); j++) {
                Column c = columns.get(j);
                if (!c.isIntercept() && c.indicator() && t.selects(c.term(), c.level())) {
                    addPair(new AlertSubject(c.term(), c.level()), j, settings);
                }
            }
        }
        this.pending = events;
        events.register(this::take);
    }

    /** A section without a limit (one the budget derives) runs here with the fixed fallback. */
    private void addPair(AlertSubject subject, int column, Cusum settings) {
        double h = settings.limit() == null ? AlertRulesConfig.CUSUM_FALLBACK_LIMIT : settings.limit();
        charts.add(new BernoulliChart(UP, subject, column, settings.up(), h, minEvents, clearAfter,
                clearFraction, cells, grid));
        charts.add(new BernoulliChart(DOWN, subject, column, settings.down(), h, minEvents, clearAfter,
                clearFraction, cells, grid));
    }

    /**
     * Buffers one complete-case event; {@code row} is the coded design row (intercept first), copied.
     * With a shared buffer, add the event to the buffer instead (once for all its rules).
     */
    public void offer(long eventTimeMillis, String id, double[] row, boolean positive) {
        pending.add(eventTimeMillis, id, row, positive);
    }

    /**
     * Processes every buffered event with time before {@code closedBeforeMillis}, in (time, id) order
     * (with a shared buffer, every rule reading from it takes them).
     */
    public void close(long closedBeforeMillis) {
        pending.deliverBefore(closedBeforeMillis);
    }

    /** One event from the buffer, in order: to every chart whose subject it belongs to. */
    private void take(long time, double[] row, double eta, boolean positive) {
        double risk = StepScore.expit(eta);
        if (!(risk > 0 && risk < 1)) {
            return;
        }
        for (int c = 0; c < charts.size(); c++) {
            BernoulliChart chart = charts.get(c);
            if ((chart.column < 0 || row[chart.column] == 1.0) && time >= chart.resumedAt) {
                chart.add(time, positive, risk);
            }
        }
    }

    /**
     * Closes the events before {@code windowEnd} and gives one reading per chart about the events
     * since the previous report (see the class description). A report at or before the previous one
     * gives nothing.
     */
    public List<Reading> report(Instant windowEnd) {
        long end = windowEnd.toEpochMilli();
        if (end <= lastReportEnd) {
            return List.of();
        }
        close(end);
        List<Reading> out = new ArrayList<>(charts.size());
        List<CusumValue> values = new ArrayList<>(charts.size());
        for (BernoulliChart chart : charts) {
            Reading reading = chart.report(windowEnd, lastReportEnd);
            values.add(chart.value(reading.zone()));
            if (end > chart.resumedAt) {
                out.add(reading);
            }
        }
        lastReportEnd = end;
        lastValues = List.copyOf(values);
        return out;
    }

    /**
     * The charts' values at the latest {@link #report}, in chart order (empty before the first): the
     * statistic at the window's end and its largest value since the report before (see
     * {@link CusumValue}). A function of the events before the window's end alone.
     */
    public List<CusumValue> reportedValues() {
        return lastValues;
    }

    /**
     * Continues one chart from its values at the end of the final window {@code windowEnd}, as
     * {@link #reportedValues} gave them then: its statistic, its events, its current excursion, and
     * from then on it takes only events at or after {@code windowEnd} and reads only windows ending
     * after it. Call before any event is offered. An entry of no chart here (another rule or subject,
     * or another limit), one that is not {@link CusumValue#complete() complete}, or one for a chart
     * already resumed is ignored.
     *
     * @return whether a chart was resumed
     */
    public boolean resume(Instant windowEnd, CusumValue value) {
        if (!value.complete()) {
            return false;
        }
        for (BernoulliChart chart : charts) {
            if (chart.matches(value) && chart.resumedAt == Long.MIN_VALUE) {
                chart.resume(windowEnd.toEpochMilli(), value);
                return true;
            }
        }
        return false;
    }

    /**
     * The readings the charts gave at published final windows, rebuilt from their published values:
     * for every resumed chart, one reading per entry of it in {@code published} with window end at or
     * before the window it was resumed from, in window order, with the zone the entry names. They
     * carry no message; the episode lifecycle replays them so its runs (windows in a row beyond or
     * inside the limits) stand where they stood in the uninterrupted run.
     */
    public List<Reading> publishedReadings(java.util.NavigableMap<Instant, List<CusumValue>> published) {
        List<Reading> out = new ArrayList<>();
        for (BernoulliChart chart : charts) {
            if (chart.resumedAt == Long.MIN_VALUE) {
                continue;
            }
            for (var e : published.headMap(Instant.ofEpochMilli(chart.resumedAt), true).entrySet()) {
                for (CusumValue v : e.getValue()) {
                    if (chart.matches(v) && v.zone() != null) {
                        Zone zone = Zone.valueOf(v.zone().toUpperCase(java.util.Locale.ROOT));
                        out.add(new Reading(chart.rule, chart.subject, zone, zone == Zone.BEYOND
                                ? (chart.multiplier > 1 ? 1 : -1) : 0, 1, clearAfter, e.getKey(), e.getKey(),
                                v.value(), null, v.limit(), clearFraction * v.limit(), null, 0, "",
                                new Measurement(Measurement.CUSUM_LLR, v.value(), null)));
                    }
                }
            }
        }
        out.sort(Comparator.comparing(Reading::windowEnd));
        return out;
    }

    /** Current chart values. */
    public List<CusumReading> readings() {
        return charts.stream()
                .map(c -> new CusumReading(c.rule, c.subject, c.chart.value(), c.chart.limit(), c.processed))
                .toList();
    }

    /** Events the chart of {@code rule} over all events had processed at its first signal, or -1 (run-length tests). */
    long firstSignalAt(String rule) {
        return charts.stream().filter(c -> c.rule.equals(rule) && c.column < 0).findFirst().orElseThrow().firstSignal;
    }
}
