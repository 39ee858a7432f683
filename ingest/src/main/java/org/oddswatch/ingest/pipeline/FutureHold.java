package org.oddswatch.ingest.pipeline;

import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.TreeMap;
import java.util.function.Predicate;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.definition.EventSpec;

/**
 * One stream's events beyond its time horizon ({@code watermark + maxFutureSkew}), at most
 * {@code futureHold} of them, held until the stream's own event times decide them (no clock):
 * <b>confirmed</b> when {@code futureConfirm} held events with distinct ids form a chain (in time
 * order, each within {@code maxFutureSkew} of the one before) spanning at least {@code futureSpan}:
 * every held event up to the chain's latest time is applied; <b>caught up</b> when the watermark
 * comes within {@code maxFutureSkew}; <b>dismissed</b> when the watermark moved on by
 * {@code maxFutureSkew} since the event was held, the hold is full (the oldest goes) or the input
 * ends. A few typos dated far ahead never span {@code futureSpan}, so they never move the watermark.
 * Events are taken out in arrival order.
 */
final class FutureHold {

    /** One held event, its record, and the stream's watermark when it was held. */
    record Held(DecodedEvent event, HeldRecords.Record record, long heldAt) {
        long time() {
            return event.timeMillis();
        }
    }

    final Duration skew;
    final int capacity;
    private final long skewMillis;
    private final long spanMillis;
    private final int confirm;
    /** Held events in arrival order. */
    private final List<Held> held = new ArrayList<>();
    /** How many held events have each event time. */
    private final TreeMap<Long, Integer> times = new TreeMap<>();

    FutureHold(EventSpec spec) {
        this.skew = spec.maxFutureSkew();
        this.skewMillis = skew.toMillis();
        this.spanMillis = spec.futureSpan().toMillis();
        this.confirm = spec.futureConfirm();
        this.capacity = spec.futureHold();
    }

    int size() {
        return held.size();
    }

    /** True when {@code time} is beyond the horizon of {@code watermark}. */
    boolean beyond(long time, long watermark) {
        return watermark != Long.MIN_VALUE && time - watermark > skewMillis;
    }

    /** The oldest held event, removed, when the hold is full; else null. */
    Held evictIfFull() {
        if (held.size() < capacity) {
            return null;
        }
        Held oldest = held.get(0);
        return take(h -> h == oldest).get(0);
    }

    /** Holds one event; returns the new frontier its chain confirms, or {@link Long#MIN_VALUE}. */
    long hold(DecodedEvent event, HeldRecords.Record record, long watermark) {
        held.add(new Held(event, record, watermark));
        long time = event.timeMillis();
        times.merge(time, 1, Integer::sum);
        long first = chainEnd(time, false);
        long last = chainEnd(time, true);
        boolean confirmed = last - first >= spanMillis && held.stream().filter(h -> h.time() >= first
                && h.time() <= last).map(h -> h.event.id()).distinct().count() >= confirm;
        return confirmed ? last : Long.MIN_VALUE;
    }

    /** The end of the chain of held times through {@code time}, each within the skew of the next, down or up. */
    private long chainEnd(long time, boolean up) {
        Long next;
        while ((next = up ? times.higherKey(time) : times.lowerKey(time)) != null
                && Math.abs(next - time) <= skewMillis) {
            time = next;
        }
        return time;
    }

    /** Removes and returns every held event at or before {@code time}. */
    List<Held> takeThrough(long time) {
        return take(h -> h.time() <= time);
    }

    /** Removes and returns the events held while the watermark was before {@code heldBefore}. */
    List<Held> takeHeldBefore(long heldBefore) {
        return take(h -> h.heldAt < heldBefore);
    }

    /** Removes and returns, in arrival order, the held events that match. */
    private List<Held> take(Predicate<Held> which) {
        List<Held> taken = new ArrayList<>();
        held.removeIf(h -> which.test(h) && taken.add(h));
        for (Held h : taken) {
            times.computeIfPresent(h.time(), (t, n) -> n == 1 ? null : n - 1);
        }
        return taken;
    }
}
