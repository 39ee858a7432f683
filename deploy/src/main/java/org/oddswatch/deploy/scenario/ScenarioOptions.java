package org.oddswatch.deploy.scenario;

import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Objects;

/**
 * Settings of one simulated feed. Immutable; change a copy with the {@code with...} methods:
 * <pre>{@code
 * ScenarioOptions o = ScenarioOptions.defaults().withSeed(7).withEventsPerWeek(4000).withDuration(Duration.ofDays(364));
 * }</pre>
 *
 * @param seed seed of the {@link java.util.SplittableRandom}; the same options give the same events
 * @param eventsPerWeek mean number of clean events per simulated week (a Poisson process)
 * @param start simulated time of the first possible event (default 2026-01-05T00:00Z, a Monday)
 * @param duration simulated span; events fall in {@code [start, start + duration)}
 * @param defectShare probability that a clean event is followed by one extra defective record
 *                    (malformed, late or duplicate; see {@link RecordDefect}); 0 for a clean feed
 * @param lateBy how far a late record's event time lies behind the feed's current time
 * @param changes scripted changes, or null for the scenario's own script
 */
public record ScenarioOptions(long seed, double eventsPerWeek, Instant start, Duration duration, double defectShare,
                              Duration lateBy, List<ScriptedChange> changes) {

    public static final long DEFAULT_SEED = 20260105L;
    public static final double DEFAULT_EVENTS_PER_WEEK = 2000;
    public static final Instant DEFAULT_START = Instant.parse("2026-01-05T00:00:00Z");
    public static final Duration DEFAULT_DURATION = Duration.ofDays(7 * 40);
    public static final Duration DEFAULT_LATE_BY = Duration.ofDays(10);

    public ScenarioOptions {
        Objects.requireNonNull(start, "start");
        Objects.requireNonNull(duration, "duration");
        lateBy = lateBy == null ? DEFAULT_LATE_BY : lateBy;
        if (!(eventsPerWeek > 0) || !Double.isFinite(eventsPerWeek)) {
            throw new IllegalArgumentException("events per week must be a positive number, got " + eventsPerWeek);
        }
        if (duration.isNegative() || duration.isZero()) {
            throw new IllegalArgumentException("duration must be positive, got " + duration);
        }
        if (!(defectShare >= 0 && defectShare <= 1)) {
            throw new IllegalArgumentException("defect share must lie in [0, 1], got " + defectShare);
        }
        changes = changes == null ? null : List.copyOf(changes);
    }

    /** Seed 20260105, 2,000 events a week, from 2026-01-05 for 40 weeks, no defects, the scenario's script. */
    public static ScenarioOptions defaults() {
        return new ScenarioOptions(DEFAULT_SEED, DEFAULT_EVENTS_PER_WEEK, DEFAULT_START, DEFAULT_DURATION, 0,
                DEFAULT_LATE_BY, null);
    }

    public ScenarioOptions withSeed(long value) {
        return new ScenarioOptions(value, eventsPerWeek, start, duration, defectShare, lateBy, changes);
    }

    public ScenarioOptions withEventsPerWeek(double value) {
        return new ScenarioOptions(seed, value, start, duration, defectShare, lateBy, changes);
    }

    public ScenarioOptions withStart(Instant value) {
        return new ScenarioOptions(seed, eventsPerWeek, value, duration, defectShare, lateBy, changes);
    }

    public ScenarioOptions withDuration(Duration value) {
        return new ScenarioOptions(seed, eventsPerWeek, start, value, defectShare, lateBy, changes);
    }

    public ScenarioOptions withDefectShare(double value) {
        return new ScenarioOptions(seed, eventsPerWeek, start, duration, value, lateBy, changes);
    }

    /** Replaces the scenario's own script; an empty list means no change at all. */
    public ScenarioOptions withChanges(List<ScriptedChange> value) {
        return new ScenarioOptions(seed, eventsPerWeek, start, duration, defectShare, lateBy, value);
    }

    /** Exclusive end of the simulated span. */
    public Instant end() {
        return start.plus(duration);
    }
}
