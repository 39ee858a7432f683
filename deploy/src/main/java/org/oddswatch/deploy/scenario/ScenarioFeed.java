package org.oddswatch.deploy.scenario;

import java.time.Instant;
import java.util.ArrayDeque;
import java.util.Iterator;
import java.util.NoSuchElementException;
import java.util.SplittableRandom;

/**
 * The iterator behind {@link Scenario#iterator()}: clean events as a Poisson process of rate
 * {@code eventsPerWeek}, each followed with probability {@code defectShare} by one defective record.
 *
 * <p>Three independent generators are split from the seed, in this order: arrival gaps, person and
 * outcome, defects. So a feed with defects carries exactly the clean events of the same seed without
 * them, and records come out in non-decreasing {@code emittedAt} order.
 */
final class ScenarioFeed implements Iterator<ScenarioEvent> {

    private static final double MILLIS_PER_WEEK = 7 * 24 * 3600 * 1000.0;
    private static final RecordDefect[] DEFECTS = {
        RecordDefect.MALFORMED_JSON, RecordDefect.BAD_OUTCOME, RecordDefect.MISSING_TIME, RecordDefect.BAD_TIME,
        RecordDefect.LATE, RecordDefect.DUPLICATE};

    private final Scenario scenario;
    private final SplittableRandom arrivals;
    private final SplittableRandom people;
    private final SplittableRandom defects;
    private final double meanGapMillis;
    private final long startMillis;
    private final long endMillis;
    private final ArrayDeque<ScenarioEvent> pending = new ArrayDeque<>(2);
    private double clockMillis;
    private long count;

    ScenarioFeed(Scenario scenario) {
        this.scenario = scenario;
        ScenarioOptions o = scenario.options();
        SplittableRandom root = new SplittableRandom(o.seed());
        this.arrivals = root.split();
        this.people = root.split();
        this.defects = root.split();
        this.meanGapMillis = MILLIS_PER_WEEK / o.eventsPerWeek();
        this.startMillis = o.start().toEpochMilli();
        this.endMillis = o.end().toEpochMilli();
        this.clockMillis = startMillis;
        advance();
    }

    @Override
    public boolean hasNext() {
        return !pending.isEmpty();
    }

    @Override
    public ScenarioEvent next() {
        ScenarioEvent e = pending.poll();
        if (e == null) {
            throw new NoSuchElementException("the scenario's simulated span has ended");
        }
        if (pending.isEmpty()) {
            advance();
        }
        return e;
    }

    /** Queues the next clean event and, maybe, one defective record after it. */
    private void advance() {
        clockMillis += -Math.log(1 - arrivals.nextDouble()) * meanGapMillis;
        if (clockMillis >= endMillis) {
            return;
        }
        Instant at = Instant.ofEpochSecond(Math.floorDiv((long) clockMillis, 1000L));
        ScenarioEvent.Person person = Population.draw(people);
        double p = scenario.trueProbability(person, at);
        boolean positive = people.nextDouble() < p;
        String id = scenario.idPrefix() + String.format("%08d", ++count);
        ScenarioEvent clean = new ScenarioEvent(id, at, at, positive, person, p, RecordDefect.NONE);
        pending.add(clean);
        if (scenario.options().defectShare() > 0 && defects.nextDouble() < scenario.options().defectShare()) {
            pending.add(defective(clean, DEFECTS[defects.nextInt(DEFECTS.length)]));
        }
    }

    private ScenarioEvent defective(ScenarioEvent clean, RecordDefect defect) {
        if (defect == RecordDefect.DUPLICATE) {
            return new ScenarioEvent(clean.id(), clean.emittedAt(), clean.collectedAt(), clean.positive(),
                    clean.person(), clean.probability(), defect);
        }
        Instant collected = clean.collectedAt();
        if (defect == RecordDefect.LATE) {
            collected = collected.minus(scenario.options().lateBy());
            if (collected.toEpochMilli() < startMillis) {
                // too early in the feed for a record to be late: send a duplicate instead
                return defective(clean, RecordDefect.DUPLICATE);
            }
        }
        ScenarioEvent.Person person = Population.draw(defects);
        double p = scenario.trueProbability(person, collected);
        boolean positive = defects.nextDouble() < p;
        return new ScenarioEvent(clean.id() + "-" + defect, clean.emittedAt(), collected, positive, person, p, defect);
    }
}
