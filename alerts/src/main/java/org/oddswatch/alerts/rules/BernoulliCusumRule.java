package org.oddswatch.alerts.rules;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;
import org.oddswatch.alerts.engine.AlertRulesConfig.Cusum;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.ChartSubject;
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
 * <p>Order and determinism: {@link #offer} only buffers; {@link #close} processes the buffered
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
    private final List<Chart> charts = new ArrayList<>();
    private final PriorityQueue<Pending> pending = new PriorityQueue<>(
            Comparator.comparingLong(Pending::time).thenComparing(Pending::id));
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
    }

    private void addPair(AlertSubject subject, int column, Cusum settings) {
        charts.add(new Chart(UP, subject, column, settings.up(), settings.limit()));
        charts.add(new Chart(DOWN, subject, column, settings.down(), settings.limit()));
    }

    /** Buffers one complete-case event; {@code row} is the coded design row (intercept first), copied. */
    public void offer(long eventTimeMillis, String id, double[] row, boolean positive) {
        if (row.length != baseline.columns().size()) {
            throw new IllegalArgumentException("design row has " + row.length + " columns, the baseline "
                    + baseline.columns().size());
        }
        pending.add(new Pending(eventTimeMillis, id == null ? "" : id, row.clone(), positive));
    }

    /** Processes every buffered event with time before {@code closedBeforeMillis}, in (time, id) order. */
    public void close(long closedBeforeMillis) {
        while (!pending.isEmpty() && pending.peek().time < closedBeforeMillis) {
            Pending p = pending.poll();
            double risk = baseline.risk(p.row);
            if (!(risk > 0 && risk < 1)) {
                continue;
            }
            for (Chart chart : charts) {
                if ((chart.column < 0 || p.row[chart.column] == 1.0) && p.time >= chart.resumedAt) {
                    chart.add(p, risk);
                }
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
        for (Chart chart : charts) {
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
        for (Chart chart : charts) {
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
        for (Chart chart : charts) {
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

    /** The start of the bucket holding {@code t} (t itself without a grid). */
    private Instant floor(long t) {
        return Instant.ofEpochMilli(grid == null ? t : grid.bucketStart(grid.bucketOf(t)));
    }

    private record Pending(long time, String id, double[] row, boolean positive) {
    }

    /** A run of events: its first event's time, its events, observed positives and expected positives. */
    private static final class Span {
        long start;
        long events;
        long observed;
        double expected;

        void restart(long time) {
            start = time;
            events = 0;
            observed = 0;
            expected = 0;
        }

        void add(boolean positive, double risk) {
            events++;
            observed += positive ? 1 : 0;
            expected += risk;
        }

        void resume(long startTime, long n, long positives, double sumRisk) {
            start = startTime;
            events = n;
            observed = positives;
            expected = sumRisk;
        }

        void copy(Span other) {
            start = other.start;
            events = other.events;
            observed = other.observed;
            expected = other.expected;
        }
    }

    /** One chart with its excursion bookkeeping and what happened since the last report. */
    private final class Chart {
        final String rule;
        final AlertSubject subject;
        final int column;
        final double multiplier;
        final double logMultiplier;
        final CusumChart chart;
        long processed;
        long firstSignal = -1;
        /** Events since the chart last stood at 0. */
        final Span excursion = new Span();
        /** Since the report before: events, signals, the highest statistic at a signal. */
        long sinceReport;
        int signals;
        double peak;
        /** The largest value since the report before: the value there, then after each event, before a restart. */
        double highest;
        /** The end of the window it was resumed from: it takes no earlier event and reads no earlier window. */
        long resumedAt = Long.MIN_VALUE;
        /** From the start of the first signalling excursion since the report before. */
        final Span signalled = new Span();

        Chart(String rule, AlertSubject subject, int column, double multiplier, double limit) {
            this.rule = rule;
            this.subject = subject;
            this.column = column;
            this.multiplier = multiplier;
            this.logMultiplier = Math.log(multiplier);
            this.chart = new CusumChart(limit);
        }

        void add(Pending p, double risk) {
            processed++;
            sinceReport++;
            if (chart.value() == 0.0) {
                excursion.restart(p.time);
            }
            double w = (p.positive ? logMultiplier : 0.0) - Math.log1p(risk * (multiplier - 1.0));
            boolean above = chart.add(w);
            highest = Math.max(highest, chart.value());
            excursion.add(p.positive, risk);
            if (signals > 0) {
                signalled.add(p.positive, risk);
            }
            if (above && processed >= minEvents) {
                if (signals == 0) {
                    signalled.copy(excursion);
                }
                if (firstSignal < 0) {
                    firstSignal = processed;
                }
                signals++;
                peak = Math.max(peak, chart.value());
                chart.reset();
            }
        }

        /**
         * The value at the report being made, the highest since the report before, and the state to
         * continue from (counts under the small-cell rule); starts the next span.
         */
        CusumValue value(Zone zone) {
            ChartSubject s = new ChartSubject(subject.term(), subject.level());
            CusumValue.Excursion run = chart.value() == 0.0 ? null : new CusumValue.Excursion(floor(excursion.start),
                    shown(excursion.events), cells.small(excursion.observed)
                            || cells.small(excursion.events - excursion.observed) ? null : excursion.observed,
                    excursion.expected);
            CusumValue v = new CusumValue(rule, s, chart.value(), Math.max(highest, chart.value()), chart.limit(),
                    zone.name().toLowerCase(java.util.Locale.ROOT), shown(processed), run);
            highest = chart.value();
            return v;
        }

        private Long shown(long count) {
            return cells.small(count) ? null : count;
        }

        /** Whether {@code v} is an entry of this chart: same rule, subject and limit. */
        boolean matches(CusumValue v) {
            return rule.equals(v.rule()) && v.subject() != null && subject.term().equals(v.subject().term())
                    && java.util.Objects.equals(subject.level(), v.subject().level()) && chart.limit() == v.limit();
        }

        void resume(long windowEnd, CusumValue v) {
            resumedAt = windowEnd;
            chart.resume(v.value());
            processed = v.events();
            highest = v.value();
            if (v.excursion() != null) {
                excursion.resume(v.excursion().start().toEpochMilli(), v.excursion().events(),
                        v.excursion().positives(), v.excursion().expected());
            }
        }

        Reading report(Instant windowEnd, long previousEnd) {
            double h = chart.limit();
            double clearLimit = clearFraction * h;
            Instant since = previousEnd == Long.MIN_VALUE ? null : Instant.ofEpochMilli(previousEnd);
            Reading r;
            if (signals > 0) {
                r = signal(windowEnd, h, clearLimit);
            } else {
                Zone zone = processed < minEvents || sinceReport == 0 ? Zone.UNKNOWN
                        : chart.value() < clearLimit ? Zone.INSIDE : Zone.BETWEEN;
                String detail = "the risk-adjusted Bernoulli CUSUM tuned to odds " + Format.num(multiplier)
                        + " times the baseline's" + (column < 0 ? "" : " (events with " + subject.label() + ")")
                        + " did not signal over the " + cells.count(sinceReport) + " events since "
                        + (since == null ? "it started" : since.toString()) + "; it stands at "
                        + Format.stat(chart.value()) + " against its limit h = " + Format.stat(h) + " (clear limit "
                        + Format.stat(clearLimit) + ")";
                r = new Reading(rule, subject, zone, 0, 1, clearAfter, since == null ? windowEnd : since, windowEnd,
                        chart.value(), null, h, clearLimit, new Evidence(null, chart.value(), null, null, null),
                        sinceReport, detail, new Measurement(Measurement.CUSUM_LLR, chart.value(), null));
            }
            sinceReport = 0;
            signals = 0;
            peak = 0;
            return r;
        }

        private Reading signal(Instant windowEnd, double h, double clearLimit) {
            String direction = multiplier > 1 ? "higher" : "lower";
            String detail = "a risk-adjusted Bernoulli CUSUM tuned to odds " + Format.num(multiplier)
                    + " times those of the baseline model (" + direction + " risk than the baseline expects"
                    + (column < 0 ? "" : ", among events with " + subject.label()) + ") reached "
                    + Format.stat(peak) + ", above its limit h = " + Format.stat(h)
                    + (signals == 1 ? " once" : ", " + signals + " times")
                    + " since the last final window (restarting at zero after each signal); over the "
                    + cells.count(signalled.events) + " events from the first event after the chart last stood at"
                    + " zero to the window's end, " + positives() + " were positive against "
                    + Format.num(signalled.expected) + " expected by the baseline (observed/expected "
                    + observedExpected() + "); it stands at "
                    + Format.stat(chart.value()) + " now";
            return new Reading(rule, subject, Zone.BEYOND, multiplier > 1 ? 1 : -1, 1, clearAfter,
                    floor(signalled.start), windowEnd, peak, null, h, clearLimit,
                    new Evidence(null, peak, null, null, null), signalled.events, detail,
                    new Measurement(Measurement.CUSUM_LLR, peak, Measurement.Side.ABOVE));
        }

        /** The excursion's positives, withheld when they or the negatives are small counts. */
        private boolean positivesWithheld() {
            return cells.small(signalled.observed) || cells.small(signalled.events - signalled.observed);
        }

        private String positives() {
            return positivesWithheld() ? cells.withheldLabel() : Format.count(signalled.observed);
        }

        private String observedExpected() {
            return positivesWithheld() ? "withheld" : Format.num(signalled.observed / signalled.expected);
        }
    }
}
