package org.oddswatch.alerts.rules;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.NavigableMap;
import java.util.Objects;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.ChartSubject;
import org.oddswatch.estimator.result.StepCusumValue;
import org.oddswatch.estimator.terms.Column;

/**
 * Sequential test of each watched odds ratio on each window step's new events: a two-sided normal
 * CUSUM (Page 1954) of the step's score statistic {@code z_t} ({@link StepScore}: the watched
 * coefficient against its baseline value, the intercept re-estimated on the step's events).
 * <pre>
 *   S+_t = max(0, S+_{t-1} + z_t - k)      signal "above" when S+_t &gt; h
 *   S-_t = max(0, S-_{t-1} - z_t - k)      signal "below" when S-_t &gt; h
 * </pre>
 * A signalling side restarts at 0, so each later signal rests on fresh evidence and the run-length
 * theory applies again. In control the {@code z_t} of successive steps are independent (disjoint
 * events) and about N(0, 1), so the in-control average run length in steps is that of the normal
 * CUSUM, computed by {@link CusumRunLength#normalTwoSided}; {@code engine.FalseAlarmBudget} solves
 * for {@code h} from a false-alarm budget.
 *
 * <p>Steps and order: {@link #offer} buffers events (in a {@link PendingEvents} the rule may share
 * with the {@link BernoulliCusumRule} of the same stream); {@link #report} (once per final window,
 * with its end) takes the buffered events before that end, in (event time, id) order, as the step's
 * new events. With overlapping windows each step's events are only the ones that entered the window,
 * so no event counts twice.
 *
 * <p>Readings (subject: the watched term and level): {@link Zone#BEYOND} when a side signalled
 * (direction +1 above, -1 below; value: the side's statistic at the signal; window: from the start of
 * the first step since that side last stood at 0, to the window's end); {@link Zone#INSIDE} when
 * neither signalled and both stand below {@code clearFraction · h}; {@link Zone#BETWEEN} otherwise;
 * {@link Zone#UNKNOWN} when the step has fewer events than the guard's {@code minEvents}, no positive
 * or no negative, or no spread in the column (the chart is left as it stood).
 */
public final class OddsRatioCusumRule {

    public static final String NAME = "odds-ratio-cusum";

    /**
     * One watched column's chart settings.
     *
     * @param reference the reference value k, in standard-error units of a step
     * @param limit the decision limit h
     */
    public record ChartSettings(double reference, double limit) {
        public ChartSettings {
            if (!(reference >= 0) || !(limit > 0) || Double.isInfinite(limit)) {
                throw new IllegalArgumentException("CUSUM needs k >= 0 and a finite h > 0: k " + reference + ", h " + limit);
            }
        }
    }

    /** One watched column's pair of sides. */
    private static final class Chart {
        final Column column;
        final int index;
        final AlertSubject subject;
        final double k;
        final CusumChart up;
        final CusumChart down;
        long upStart = Long.MIN_VALUE;
        long downStart = Long.MIN_VALUE;
        /** The window end the chart was resumed from after a restart ({@link #resume}); MIN_VALUE when not. */
        long resumedAt = Long.MIN_VALUE;
        final StepScore step = new StepScore();
        StepCusumValue reported;

        /** Whether a published value is this chart's (same watched term and level). */
        boolean matches(StepCusumValue value) {
            return subject.term().equals(value.subject().term()) && Objects.equals(subject.level(), value.subject().level());
        }

        Chart(Column column, int index, ChartSettings settings) {
            this.column = column;
            this.index = index;
            this.subject = new AlertSubject(column.term(), column.level());
            this.k = settings.reference();
            this.up = new CusumChart(settings.limit());
            this.down = new CusumChart(settings.limit());
        }
    }

    private final BaselineModel baseline;
    private final long minEvents;
    private final int clearAfter;
    private final double clearFraction;
    private final List<Chart> charts = new ArrayList<>();
    private final PendingEvents pending;
    private long lastReportEnd = Long.MIN_VALUE;

    /**
     * @param watched the watched design columns (indices into the baseline's columns) with their settings
     * @param clearAfter windows in a row inside the clear limit to clear
     * @param clearFraction the clear limit as a share of h
     */
    public OddsRatioCusumRule(BaselineModel baseline, List<Integer> watched, List<ChartSettings> settings,
                              InformationGuard guard, int clearAfter, double clearFraction) {
        this(baseline, watched, settings, guard, clearAfter, clearFraction, new PendingEvents(baseline));
    }

    /**
     * @param events the buffer the rule takes its events from, shared with the stream's other
     *     sequential rule: events go into it once ({@link PendingEvents#add}), not through {@link #offer}
     */
    public OddsRatioCusumRule(BaselineModel baseline, List<Integer> watched, List<ChartSettings> settings,
                              InformationGuard guard, int clearAfter, double clearFraction, PendingEvents events) {
        this.baseline = baseline;
        this.minEvents = guard.minEvents();
        this.clearAfter = clearAfter;
        this.clearFraction = clearFraction;
        for (int i = 0; i < watched.size(); i++) {
            int j = watched.get(i);
            charts.add(new Chart(baseline.columns().get(j), j, settings.get(i)));
        }
        this.pending = events;
        events.register(this::take);
    }

    /**
     * Buffers one complete-case event; {@code row} is the coded design row (intercept first), copied.
     * With a shared buffer, add the event to the buffer instead (once for all its rules).
     */
    public void offer(long eventTimeMillis, String id, double[] row, boolean positive) {
        pending.add(eventTimeMillis, id, row, positive);
    }

    /** One event from the buffer, in order: into the current step of every watched column (none without a finite eta). */
    private void take(long time, double[] row, double eta, boolean positive) {
        if (!Double.isFinite(eta)) {
            return;
        }
        for (int c = 0; c < charts.size(); c++) {
            Chart chart = charts.get(c);
            if (time >= chart.resumedAt) { // a resumed chart already holds the events before its window's end
                chart.step.add(eta, row[chart.index], positive);
            }
        }
    }

    /**
     * Takes the buffered events before {@code windowEnd} as one step and gives one reading per watched
     * column (see the class description); a report at or before the previous one gives nothing.
     */
    public List<Reading> report(Instant windowEnd) {
        long end = windowEnd.toEpochMilli();
        if (end <= lastReportEnd) {
            return List.of();
        }
        pending.deliverBefore(end);
        long stepStart = lastReportEnd;
        List<Reading> out = new ArrayList<>(charts.size());
        for (Chart chart : charts) {
            if (end > chart.resumedAt) { // windows up to a resumed chart's window were read before the restart
                Reading reading = read(chart, stepStart, windowEnd);
                out.add(reading);
                chart.reported = value(chart, reading);
            } else {
                chart.reported = null;
            }
            chart.step.clear();
        }
        lastReportEnd = end;
        return out;
    }

    /** Each chart's state after the latest {@link #report}, for the final estimate (none for a chart not read). */
    public List<StepCusumValue> reportedValues() {
        return charts.stream().map(c -> c.reported).filter(Objects::nonNull).toList();
    }

    private static StepCusumValue value(Chart chart, Reading reading) {
        return new StepCusumValue(new ChartSubject(chart.subject.term(), chart.subject.level()), chart.up.value(),
                chart.down.value(), chart.up.value() == 0.0 ? null : Instant.ofEpochMilli(chart.upStart),
                chart.down.value() == 0.0 ? null : Instant.ofEpochMilli(chart.downStart), chart.up.limit(),
                reading.zone().name().toLowerCase(Locale.ROOT), reading.direction());
    }

    /**
     * Continues one chart after a restart from the state published with the final window ending at
     * {@code windowEnd}: both sides' values and the steps they started at. The caller re-feeds the
     * events from before that window's end; the chart takes only those at or after it, and reads no
     * window ending at or before it, so from the next window on it gives the uninterrupted run's
     * values and readings. A value for no watched column, or for a chart already resumed, is ignored.
     *
     * @return whether a chart was resumed
     */
    public boolean resume(Instant windowEnd, StepCusumValue value) {
        for (Chart chart : charts) {
            if (chart.resumedAt == Long.MIN_VALUE && chart.matches(value) && value.zone() != null) {
                chart.up.resume(value.upper());
                chart.down.resume(value.lower());
                chart.upStart = value.upperStart() == null ? Long.MIN_VALUE : value.upperStart().toEpochMilli();
                chart.downStart = value.lowerStart() == null ? Long.MIN_VALUE : value.lowerStart().toEpochMilli();
                chart.resumedAt = windowEnd.toEpochMilli();
                return true;
            }
        }
        return false;
    }

    /**
     * The readings the resumed charts gave at published final windows up to the one each was resumed
     * from, chart by chart, each in window order, with the zone and direction the entry names: the
     * episode lifecycle replays them (publishing nothing; {@code AlertEngine.resumeCharts} puts all
     * charts' readings in window order) so its runs stand where they stood in the uninterrupted run.
     */
    public List<Reading> publishedReadings(NavigableMap<Instant, List<StepCusumValue>> published) {
        List<Reading> out = new ArrayList<>();
        for (Chart chart : charts) {
            if (chart.resumedAt == Long.MIN_VALUE) {
                continue;
            }
            for (var e : published.headMap(Instant.ofEpochMilli(chart.resumedAt), true).entrySet()) {
                for (StepCusumValue v : e.getValue()) {
                    if (v.zone() != null && chart.matches(v)) {
                        Zone zone = Zone.valueOf(v.zone().toUpperCase(Locale.ROOT));
                        double high = Math.max(v.upper(), v.lower());
                        out.add(new Reading(NAME, chart.subject, zone, v.direction(), 1, clearAfter, e.getKey(),
                                e.getKey(), null, null, v.limit(), clearFraction * v.limit(), null, 0, "",
                                new Measurement(Measurement.ODDS_RATIO_CUSUM, high, null)));
                    }
                }
            }
        }
        return out;
    }

    private Reading read(Chart chart, long stepStart, Instant windowEnd) {
        StepScore step = chart.step;
        Instant from = stepStart == Long.MIN_VALUE ? windowEnd : Instant.ofEpochMilli(stepStart);
        double h = chart.up.limit();
        double clearLimit = clearFraction * h;
        double bBase = baseline.coefficients()[chart.index];
        StepScore.Score score = step.events() < minEvents ? null : step.score();
        if (score == null) {
            String why = step.events() < minEvents
                    ? step.events() + " new events, fewer than the minimum " + minEvents
                    : "the step's events give no score for " + chart.subject.label()
                            + " (no positive, no negative, or every event with the same value)";
            return new Reading(NAME, chart.subject, Zone.UNKNOWN, 0, 1, clearAfter, from, windowEnd, null,
                    Math.exp(bBase), h, clearLimit, null, step.events(), why,
                    new Measurement(Measurement.ODDS_RATIO_CUSUM, null, null));
        }
        long startKey = stepStart == Long.MIN_VALUE ? windowEnd.toEpochMilli() : stepStart;
        if (chart.up.value() == 0.0) {
            chart.upStart = startKey;
        }
        if (chart.down.value() == 0.0) {
            chart.downStart = startKey;
        }
        double z = score.z();
        boolean upSignal = chart.up.add(z - chart.k);
        boolean downSignal = chart.down.add(-z - chart.k);
        double stepOddsRatio = Math.exp(bBase + score.shift());
        String measured = "the odds ratio of " + chart.subject.label() + " among the step's " + step.events()
                + " new events is about " + Format.num(stepOddsRatio) + " against " + Format.num(Math.exp(bBase))
                + " in the baseline (score z = " + Format.stat(z) + ", intercept re-estimated on the step)";
        if (upSignal || downSignal) {
            boolean above = upSignal && (!downSignal || chart.up.value() >= chart.down.value());
            CusumChart side = above ? chart.up : chart.down;
            double value = side.value();
            long start = above ? chart.upStart : chart.downStart;
            side.reset();
            String detail = measured + "; the two-sided CUSUM of these step scores (k = " + Format.stat(chart.k)
                    + ") reached " + Format.stat(value) + " on its " + (above ? "upper" : "lower")
                    + " side, above its limit h = " + Format.stat(h) + " (that side restarts at zero)";
            return new Reading(NAME, chart.subject, Zone.BEYOND, above ? 1 : -1, 1, clearAfter,
                    Instant.ofEpochMilli(start), windowEnd, stepOddsRatio, Math.exp(bBase), h, clearLimit,
                    new Evidence(z, value, null, null, null), step.events(), detail,
                    new Measurement(Measurement.ODDS_RATIO_CUSUM, value,
                            above ? Measurement.Side.ABOVE : Measurement.Side.BELOW));
        }
        double high = Math.max(chart.up.value(), chart.down.value());
        Zone zone = high < clearLimit ? Zone.INSIDE : Zone.BETWEEN;
        String detail = measured + "; the two-sided CUSUM stands at " + Format.stat(chart.up.value()) + " (upper) and "
                + Format.stat(chart.down.value()) + " (lower) against h = " + Format.stat(h) + " (clear limit "
                + Format.stat(clearLimit) + ")";
        return new Reading(NAME, chart.subject, zone, 0, 1, clearAfter, from, windowEnd, stepOddsRatio,
                Math.exp(bBase), h, clearLimit, new Evidence(z, high, null, null, null), step.events(), detail,
                new Measurement(Measurement.ODDS_RATIO_CUSUM, high, null));
    }
}
