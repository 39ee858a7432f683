package org.oddswatch.alerts.rules;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * The events the sequential rules have not yet taken, held until their time is closed and then
 * delivered in (event time, id) order to every rule that reads from it. One buffer serves both CUSUM
 * rules of a stream ({@link BernoulliCusumRule} and {@link OddsRatioCusumRule}), so each event is
 * copied, held and sorted once, and its baseline linear predictor {@code eta = x'b} computed once
 * (when it is added, while its row is at hand); a rule built without a buffer gets one of its own.
 *
 * <p>Order and determinism: {@link #deliverBefore} takes every held event with time before the
 * closing time, sorts those by (event time, id) and hands each, in that order, to each reader in the
 * order the readers were registered. An event added after its time was closed goes with the next
 * delivery, in its sorted place among those events; arrival order within the allowed lateness does
 * not matter. Events with the same time and id keep their arrival order (the sort is stable). The
 * readers' state after a delivery is the same as when each rule kept its own priority queue, since
 * each reader sees exactly the sequence its own queue gave.
 *
 * <p>Cost: events arrive nearly in time order, so the sort of one delivery (a merge sort, linear on
 * sorted runs) costs about one comparison per event, where a binary heap costs about
 * {@code log2(held)} per event and rule. A delivery finds the due events by scanning an array of
 * the held events' times (a few days' events), not the events themselves, which lie scattered in
 * memory. Not thread-safe; one instance per stream.
 */
public final class PendingEvents {

    /** A rule that takes the buffer's events in order. */
    interface Reader {
        /**
         * One event, in (event time, id) order.
         *
         * @param row the coded design row (intercept first); shared by every reader, not to be changed
         * @param eta the baseline model's linear predictor of {@code row}
         */
        void take(long time, double[] row, double eta, boolean positive);
    }

    private static final Comparator<Held> ORDER = (a, b) -> {
        int byTime = Long.compare(a.time, b.time);
        return byTime != 0 ? byTime : a.id.compareTo(b.id);
    };

    private final BaselineModel baseline;
    private final int width;
    private final List<Reader> readers = new ArrayList<>(2);
    private Held[] held = new Held[1024];
    /** The held events' times, beside them: a delivery scans these, not the events themselves. */
    private long[] times = new long[1024];
    private int size;
    /** The earliest held time (Long.MAX_VALUE when none): a close before it has nothing to deliver. */
    private long earliest = Long.MAX_VALUE;
    private Held[] due = new Held[1024];

    /** @param baseline the model whose linear predictor each event carries (its columns fix the row width) */
    public PendingEvents(BaselineModel baseline) {
        this.baseline = baseline;
        this.width = baseline.columns().size();
    }

    void register(Reader reader) {
        readers.add(reader);
    }

    /**
     * Holds one complete-case event until its time is closed.
     *
     * @param id the event's id (null reads as the empty id)
     * @param row the coded design row (intercept first), copied
     * @throws IllegalArgumentException when the row's width is not the baseline's
     */
    public void add(long eventTimeMillis, String id, double[] row, boolean positive) {
        if (row.length != width) {
            throw new IllegalArgumentException("design row has " + row.length + " columns, the baseline " + width);
        }
        if (size == held.length) {
            held = Arrays.copyOf(held, 2 * size);
            times = Arrays.copyOf(times, 2 * size);
        }
        times[size] = eventTimeMillis;
        earliest = Math.min(earliest, eventTimeMillis);
        held[size++] = new Held(eventTimeMillis, id == null ? "" : id, row.clone(), baseline.linearPredictor(row),
                positive);
    }

    /** Events held, not yet delivered. */
    int held() {
        return size;
    }

    /**
     * Delivers every held event with time before {@code closedBeforeMillis} to every reader, in
     * (event time, id) order (see the class description); the later ones stay held.
     */
    void deliverBefore(long closedBeforeMillis) {
        if (earliest >= closedBeforeMillis) {
            return; // the stream's other rule has already taken them, or none is due
        }
        int n = 0;
        int kept = 0;
        long keptEarliest = Long.MAX_VALUE;
        for (int i = 0; i < size; i++) {
            long time = times[i];
            if (time < closedBeforeMillis) {
                if (n == due.length) {
                    due = Arrays.copyOf(due, 2 * n);
                }
                due[n++] = held[i];
            } else {
                times[kept] = time;
                held[kept++] = held[i];
                keptEarliest = Math.min(keptEarliest, time);
            }
        }
        Arrays.fill(held, kept, size, null);
        size = kept;
        earliest = keptEarliest;
        Arrays.sort(due, 0, n, ORDER);
        for (int i = 0; i < n; i++) {
            Held h = due[i];
            for (int r = 0; r < readers.size(); r++) {
                readers.get(r).take(h.time, h.row, h.eta, h.positive);
            }
            due[i] = null;
        }
    }

    private record Held(long time, String id, double[] row, double eta, boolean positive) {
    }
}
