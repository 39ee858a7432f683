package org.oddswatch.alerts.rules;

import java.time.Instant;
import java.util.Locale;
import java.util.Objects;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.ChartSubject;
import org.oddswatch.estimator.result.CusumValue;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * One chart of the {@link BernoulliCusumRule}: one rule (up or down), one subject (all events, or
 * the events with one watched indicator), with its excursion bookkeeping and what happened since
 * the last report, and the reading and published values made from them.
 */
final class BernoulliChart {

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
    private final long minEvents;
    private final int clearAfter;
    private final double clearFraction;
    private final SmallCellPolicy cells;
    private final WindowGeometry grid;

    BernoulliChart(String rule, AlertSubject subject, int column, double multiplier, double limit,
                   long minEvents, int clearAfter, double clearFraction, SmallCellPolicy cells, WindowGeometry grid) {
        this.rule = rule;
        this.subject = subject;
        this.column = column;
        this.multiplier = multiplier;
        this.logMultiplier = Math.log(multiplier);
        this.chart = new CusumChart(limit);
        this.minEvents = minEvents;
        this.clearAfter = clearAfter;
        this.clearFraction = clearFraction;
        this.cells = cells;
        this.grid = grid;
    }

    void add(long time, boolean positive, double risk) {
        processed++;
        sinceReport++;
        if (chart.value() == 0.0) {
            excursion.restart(time);
        }
        double w = (positive ? logMultiplier : 0.0) - Math.log1p(risk * (multiplier - 1.0));
        boolean above = chart.add(w);
        highest = Math.max(highest, chart.value());
        excursion.add(positive, risk);
        if (signals > 0) {
            signalled.add(positive, risk);
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
                zone.name().toLowerCase(Locale.ROOT), shown(processed), run);
        highest = chart.value();
        return v;
    }

    private Long shown(long count) {
        return cells.small(count) ? null : count;
    }

    /** Whether {@code v} is an entry of this chart: same rule, subject and limit. */
    boolean matches(CusumValue v) {
        return rule.equals(v.rule()) && v.subject() != null && subject.term().equals(v.subject().term())
                && Objects.equals(subject.level(), v.subject().level()) && chart.limit() == v.limit();
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

    /** The start of the bucket holding {@code t} (t itself without a grid). */
    private Instant floor(long t) {
        return Instant.ofEpochMilli(grid == null ? t : grid.bucketStart(grid.bucketOf(t)));
    }
}
