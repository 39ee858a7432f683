package org.oddswatch.deploy.feed;

import java.time.Duration;
import java.time.Instant;

/**
 * Simulated time running {@code speed} times faster than real time from a start: at real time
 * {@code t0 + r} the simulated time is {@code simStart + r * speed}. A speed of 0 means "as fast as
 * possible" (no pacing). Used only by the feed, never by the estimator or the rules, which see event
 * times alone.
 */
public final class SimulatedClock {

    private final Instant simStart;
    private final double speed;
    private final long realStartNanos;

    public SimulatedClock(Instant simStart, double speed) {
        if (!(speed >= 0) || Double.isInfinite(speed)) {
            throw new IllegalArgumentException("speed must be 0 (unpaced) or a positive factor, got " + speed);
        }
        this.simStart = simStart;
        this.speed = speed;
        this.realStartNanos = System.nanoTime();
    }

    public boolean paced() {
        return speed > 0;
    }

    public double speed() {
        return speed;
    }

    /** The simulated time now (the start plus elapsed real time times the speed); the start when unpaced. */
    public Instant now() {
        if (!paced()) {
            return simStart;
        }
        double simMillis = (System.nanoTime() - realStartNanos) / 1e6 * speed;
        return simStart.plusMillis((long) simMillis);
    }

    /** Real time from now until the simulated instant {@code at} is reached; zero if passed or unpaced. */
    public Duration untilReached(Instant at) {
        if (!paced()) {
            return Duration.ZERO;
        }
        double realNanos = Duration.between(simStart, at).toNanos() / speed;
        long wait = realStartNanos + (long) realNanos - System.nanoTime();
        return wait > 0 ? Duration.ofNanos(wait) : Duration.ZERO;
    }

    /** Real time one simulated span takes at this speed (zero when unpaced). */
    public Duration realTimeOf(Duration simulated) {
        return paced() ? Duration.ofNanos((long) (simulated.toNanos() / speed)) : Duration.ZERO;
    }
}
