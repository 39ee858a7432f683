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
 * the next close, in its sorted place among those events.
 *
 * <p>Signals and episodes, decided event by event (never by how often {@code close} is called):
 * a signal restarts the chart at 0 (so each later signal rests on fresh evidence and the run-length
 * theory applies again). The first signal raises; a later signal while open is reported as
 * continuing only when at least {@code clearAfterEvents} events have passed since the episode's
 * last message; the episode clears once {@code clearAfterEvents} events have passed since its last
 * signal. The guard's {@code minEvents}: a chart does not signal before it has processed that many
 * events. Each signal reports the excursion that led to it: from the first event after the chart
 * last stood at 0 (the usual CUSUM change-point estimate) to the signalling event, with its events,
 * observed positives and expected positives under the baseline.
 *
 * <p>Published times and counts: an alert's window runs from the start of the bucket holding the
 * excursion's first event to the end of the bucket holding the signalling (or clearing) event, so no
 * event's own time is published; counts in the message follow the {@link SmallCellPolicy} (a count
 * from 1 to 4 reads {@code <5}, and the positives and their observed/expected ratio are withheld
 * when the positives or the negatives are that small).
 */
public final class BernoulliCusumRule {

    public static final String UP = "bernoulli-cusum-up";
    public static final String DOWN = "bernoulli-cusum-down";

    private final BaselineModel baseline;
    private final WindowGeometry grid;
    private final SmallCellPolicy cells;
    private final long clearAfterEvents;
    private final long minEvents;
    private final List<Chart> charts = new ArrayList<>();
    private final PriorityQueue<Pending> pending = new PriorityQueue<>(
            Comparator.comparingLong(Pending::time).thenComparing(Pending::id));

    public BernoulliCusumRule(Cusum settings, InformationGuard guard, BaselineModel baseline) {
        this(settings, guard, baseline, null, SmallCellPolicy.DEFAULT);
    }

    /**
     * @param grid the stream's window grid: an alert's window is widened to whole buckets (never an
     *     exact event time is published); null keeps the event times (for tests of the chart)
     * @param cells the small-cell rule for the counts the message names
     */
    public BernoulliCusumRule(Cusum settings, InformationGuard guard, BaselineModel baseline, WindowGeometry grid,
                              SmallCellPolicy cells) {
        this.grid = grid;
        this.cells = cells;
        this.baseline = baseline;
        this.clearAfterEvents = settings.clearAfterEvents();
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

    /** Events buffered and not yet processed. */
    public int pendingEvents() {
        return pending.size();
    }

    /** Processes every buffered event with time before {@code closedBeforeMillis}; readings in event order. */
    public List<Reading> close(long closedBeforeMillis) {
        List<Reading> out = new ArrayList<>();
        while (!pending.isEmpty() && pending.peek().time < closedBeforeMillis) {
            Pending p = pending.poll();
            double risk = baseline.risk(p.row);
            if (!(risk > 0 && risk < 1)) {
                continue;
            }
            for (Chart chart : charts) {
                if (chart.column < 0 || p.row[chart.column] == 1.0) {
                    Reading r = chart.add(p, risk);
                    if (r != null) {
                        out.add(r);
                    }
                }
            }
        }
        return out;
    }

    /** Marks a chart's episode open after a restart (see {@code AlertEngine.restore}). */
    public void restoreOpen(String rule, AlertSubject subject) {
        for (Chart chart : charts) {
            if (chart.rule.equals(rule) && chart.subject.equals(subject)) {
                chart.open = true;
                chart.sinceSignal = 0;
                chart.sinceMessage = 0;
            }
        }
    }

    /** Current chart values. */
    public List<CusumReading> readings() {
        return charts.stream()
                .map(c -> new CusumReading(c.rule, c.subject, c.chart.value(), c.chart.limit(), c.processed))
                .toList();
    }

    /** The start of the bucket holding {@code t} (t itself without a grid). */
    private Instant floor(long t) {
        return Instant.ofEpochMilli(grid == null ? t : grid.bucketStart(grid.bucketOf(t)));
    }

    /** The end of the bucket holding {@code end - 1}, for an exclusive end (itself without a grid). */
    private Instant ceil(long end) {
        return Instant.ofEpochMilli(grid == null ? end : grid.bucketStart(grid.bucketOf(end - 1) + 1));
    }

    private record Pending(long time, String id, double[] row, boolean positive) {
    }

    /** One chart with its excursion bookkeeping and episode state. */
    private final class Chart {
        final String rule;
        final AlertSubject subject;
        final int column;
        final double multiplier;
        final double logMultiplier;
        final CusumChart chart;
        long processed;
        boolean open;
        long sinceSignal;
        long sinceMessage;
        long lastSignalEnd;
        long excursionStart;
        long excursionEvents;
        long excursionObserved;
        double excursionExpected;

        Chart(String rule, AlertSubject subject, int column, double multiplier, double limit) {
            this.rule = rule;
            this.subject = subject;
            this.column = column;
            this.multiplier = multiplier;
            this.logMultiplier = Math.log(multiplier);
            this.chart = new CusumChart(limit);
        }

        /** Adds one event; returns a reading when this event raises, continues or clears an episode. */
        Reading add(Pending p, double risk) {
            processed++;
            sinceSignal++;
            sinceMessage++;
            if (chart.value() == 0.0) {
                excursionStart = p.time;
                excursionEvents = 0;
                excursionObserved = 0;
                excursionExpected = 0;
            }
            double w = (p.positive ? logMultiplier : 0.0) - Math.log1p(risk * (multiplier - 1.0));
            boolean above = chart.add(w);
            excursionEvents++;
            excursionObserved += p.positive ? 1 : 0;
            excursionExpected += risk;
            if (above && processed >= minEvents) {
                double s = chart.value();
                Reading r = null;
                if (!open || sinceMessage >= clearAfterEvents) {
                    r = signal(p, s);
                    sinceMessage = 0;
                }
                open = true;
                sinceSignal = 0;
                lastSignalEnd = p.time + 1;
                chart.reset();
                return r;
            }
            if (open && sinceSignal >= clearAfterEvents) {
                open = false;
                return cleared(p);
            }
            return null;
        }

        private Reading signal(Pending p, double s) {
            String direction = multiplier > 1 ? "higher" : "lower";
            String detail = "a risk-adjusted Bernoulli CUSUM tuned to odds " + Format.num(multiplier)
                    + " times those of the baseline model (" + direction + " risk than the baseline expects"
                    + (column < 0 ? "" : ", among events with " + subject.label()) + ") reached "
                    + Format.stat(s) + ", above its limit h = " + Format.stat(chart.limit()) + "; over the "
                    + cells.count(excursionEvents) + " events since the chart last stood at zero, "
                    + positives() + " were positive against " + Format.num(excursionExpected)
                    + " expected by the baseline (observed/expected " + observedExpected()
                    + "); the chart restarts at zero";
            return new Reading(rule, subject, Zone.BEYOND, multiplier > 1 ? 1 : -1, 1, 1,
                    floor(excursionStart), ceil(p.time + 1), s, 0.0, chart.limit(),
                    chart.limit(), new Evidence(null, s, null, null, null), excursionEvents, detail);
        }

        /** The excursion's positives, withheld when they or the negatives are small counts. */
        private boolean positivesWithheld() {
            return cells.small(excursionObserved) || cells.small(excursionEvents - excursionObserved);
        }

        private String positives() {
            return positivesWithheld() ? cells.withheldLabel() : Format.count(excursionObserved);
        }

        private String observedExpected() {
            return positivesWithheld() ? "withheld" : Format.num(excursionObserved / excursionExpected);
        }

        private Reading cleared(Pending p) {
            String detail = "the risk-adjusted Bernoulli CUSUM tuned to odds " + Format.num(multiplier)
                    + " times the baseline's" + (column < 0 ? "" : " (events with " + subject.label() + ")")
                    + " has not signalled again over " + cells.count(sinceSignal) + " events; it stands at "
                    + Format.stat(chart.value()) + " against its limit h = " + Format.stat(chart.limit());
            return new Reading(rule, subject, Zone.INSIDE, 0, 1, 1, floor(lastSignalEnd),
                    ceil(p.time + 1), chart.value(), 0.0, chart.limit(), chart.limit(),
                    new Evidence(null, chart.value(), null, null, null), sinceSignal, detail);
        }
    }
}
