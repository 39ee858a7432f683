package org.oddswatch.ingest.pipeline;

import java.time.Duration;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.definition.EventSpec;

/**
 * One stream's events beyond its time horizon ({@code watermark + maxFutureSkew}), held until
 * the stream's own events decide what they are. Nothing here reads a clock: the evidence is event
 * times only, so a replay of the same records gives the same decisions as the live service.
 *
 * <ul>
 *   <li><b>Confirmed</b>: {@code futureConfirm} held events with distinct ids form a chain (in time
 *       order, each within {@code maxFutureSkew} of the one before) that spans at least
 *       {@code futureSpan}. The chain's latest time is the new frontier: every held event up to it is
 *       applied, in arrival order. A quiet weekend or a holiday of any length thus costs no event.</li>
 *   <li><b>Caught up</b>: a held event that the watermark has come within {@code maxFutureSkew} of
 *       is applied (the stream's present reached it).</li>
 *   <li><b>Dismissed</b>: a held event still beyond the horizon after the watermark moved on by
 *       {@code maxFutureSkew} since it was held is a typo (the stream carried on in the present
 *       without it) and is rejected; so is the oldest held event when the hold is full, and every
 *       held event at the end of the input.</li>
 * </ul>
 *
 * <p>A handful of typos dated far ahead (a wrong year) within a few seconds of each other never
 * span {@code futureSpan}, so they never move the watermark. Cost: at most {@code futureHold}
 * events per stream; each hold walks the chain of the new event, so at most {@code futureHold}
 * steps.
 */
final class FutureHold {

    /** One held event. */
    static final class Held {
        final DecodedEvent event;
        final HeldRecord record;
        /** The stream's watermark when the event was held. */
        final long heldAt;
        final long sequence;

        Held(DecodedEvent event, HeldRecord record, long heldAt, long sequence) {
            this.event = event;
            this.record = record;
            this.heldAt = heldAt;
            this.sequence = sequence;
        }

        long time() {
            return event.timeMillis();
        }
    }

    private final long skewMillis;
    private final long spanMillis;
    private final int confirm;
    private final int capacity;
    private final Duration skew;
    /** Held events by time, then by arrival. */
    private final TreeMap<Long, List<Held>> byTime = new TreeMap<>();
    private int size;
    private long sequence;

    FutureHold(EventSpec spec) {
        this.skew = spec.maxFutureSkew();
        this.skewMillis = spec.maxFutureSkew().toMillis();
        this.spanMillis = spec.futureSpan().toMillis();
        this.confirm = spec.futureConfirm();
        this.capacity = spec.futureHold();
    }

    int size() {
        return size;
    }

    boolean isEmpty() {
        return size == 0;
    }

    Duration skew() {
        return skew;
    }

    /** True when {@code time} is beyond the horizon of {@code watermark}. */
    boolean beyond(long time, long watermark) {
        return watermark != Long.MIN_VALUE && time - watermark > skewMillis;
    }

    /** The oldest held event (by arrival) when the hold is full, else null; removed. */
    Held evictIfFull() {
        if (size < capacity) {
            return null;
        }
        Held oldest = null;
        for (List<Held> list : byTime.values()) {
            for (Held held : list) {
                if (oldest == null || held.sequence < oldest.sequence) {
                    oldest = held;
                }
            }
        }
        remove(oldest);
        return oldest;
    }

    int capacity() {
        return capacity;
    }

    /**
     * Holds one event and returns the new frontier its chain confirms, or {@link Long#MIN_VALUE}.
     */
    long hold(DecodedEvent event, HeldRecord record, long watermark) {
        Held held = new Held(event, record, watermark, sequence++);
        byTime.computeIfAbsent(held.time(), t -> new ArrayList<>(1)).add(held);
        size++;
        return confirmedFrontier(held.time());
    }

    /** The latest time of the chain holding {@code time} when that chain confirms a frontier. */
    private long confirmedFrontier(long time) {
        long first = time;
        Long lower;
        while ((lower = byTime.lowerKey(first)) != null && first - lower <= skewMillis) {
            first = lower;
        }
        long last = time;
        Long higher;
        while ((higher = byTime.higherKey(last)) != null && higher - last <= skewMillis) {
            last = higher;
        }
        if (last - first < spanMillis) {
            return Long.MIN_VALUE;
        }
        Set<String> ids = new HashSet<>();
        for (List<Held> list : byTime.subMap(first, true, last, true).values()) {
            for (Held held : list) {
                ids.add(held.event.id());
            }
            if (ids.size() >= confirm) {
                return last;
            }
        }
        return Long.MIN_VALUE;
    }

    /** Removes and returns, in arrival order, every held event at or before {@code time}. */
    List<Held> takeThrough(long time) {
        List<Held> taken = new ArrayList<>();
        Iterator<Map.Entry<Long, List<Held>>> it = byTime.headMap(time, true).entrySet().iterator();
        while (it.hasNext()) {
            taken.addAll(it.next().getValue());
            it.remove();
        }
        size -= taken.size();
        taken.sort((a, b) -> Long.compare(a.sequence, b.sequence));
        return taken;
    }

    /** Removes and returns, in arrival order, the events held since before {@code heldBefore}. */
    List<Held> takeHeldBefore(long heldBefore) {
        List<Held> taken = new ArrayList<>();
        Iterator<Map.Entry<Long, List<Held>>> it = byTime.entrySet().iterator();
        while (it.hasNext()) {
            List<Held> list = it.next().getValue();
            list.removeIf(held -> {
                if (held.heldAt < heldBefore) {
                    taken.add(held);
                    return true;
                }
                return false;
            });
            if (list.isEmpty()) {
                it.remove();
            }
        }
        size -= taken.size();
        taken.sort((a, b) -> Long.compare(a.sequence, b.sequence));
        return taken;
    }

    /** Removes and returns everything, in arrival order. */
    List<Held> takeAll() {
        return takeThrough(Long.MAX_VALUE);
    }

    private void remove(Held held) {
        List<Held> list = byTime.get(held.time());
        list.remove(held);
        if (list.isEmpty()) {
            byTime.remove(held.time());
        }
        size--;
    }
}
