package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * {@value OddswatchMeters#RECORDS}: consumed records by {@code monitor}, {@code stream},
 * {@code outcome} ({@code accepted}, {@code rejected}, {@code late}, {@code duplicate}) and
 * {@code reason} ({@value OddswatchMeters#NONE} for an accepted record), once per record and monitor.
 * A record routed to no stream (rejected before routing, or {@code too-many-streams}) is counted
 * under {@code stream="none"} of its monitor; one no monitor could read under {@code monitor="none"}.
 * A stream's counters appear with its first record and leave with it ({@link #forgetStream}).
 *
 * <p>Accepted records, the common case, are summed per stream in a plain field and added to their
 * counter once per batch ({@link #flush}): an atomic add per record took about an eighth of the
 * applying thread's samples in a flight recording of the ingest benchmark. {@link #accepted} and
 * {@link #flush} are called by the one thread that applies records.
 */
public final class RecordMeters implements MeterBinder {

    private final StreamMeters series = new StreamMeters();
    private final Map<List<String>, Counter> counters = new ConcurrentHashMap<>();
    private final Map<String, PendingCount> accepted = new HashMap<>();

    /** A stream's accepted-records counter and the records not yet added to it. */
    private static final class PendingCount {
        final Counter counter;
        long pending;

        PendingCount(Counter counter) {
            this.counter = counter;
        }
    }

    @Override
    public void bindTo(MeterRegistry registry) {
        series.bindTo(registry);
    }

    /** One accepted record of a stream, added to its counter at the next {@link #flush}. */
    public void accepted(String monitor, String stream) {
        PendingCount count = accepted.get(stream);
        if (count == null) {
            Counter counter = counter(monitor, stream, "accepted", null);
            if (counter == null) {
                return;
            }
            count = new PendingCount(counter);
            accepted.put(stream, count);
        }
        count.pending++;
    }

    /**
     * One record that was not accepted.
     *
     * @param monitor the monitor's name, or null when no monitor could read the record
     * @param stream a stream the monitor holds, or null for a record routed to no stream: never a
     *     name made from a rejected record's values
     */
    public void count(String monitor, String stream, String outcome, String reason) {
        Counter counter = counter(monitor, stream, outcome, reason);
        if (counter != null) {
            counter.increment();
        }
    }

    /** Adds the accepted records summed since the last call to their counters. */
    public void flush() {
        for (PendingCount count : accepted.values()) {
            if (count.pending > 0) {
                count.counter.increment(count.pending);
                count.pending = 0;
            }
        }
    }

    /** Removes the stream's counters (after adding what is pending): it left the instance. */
    public void forgetStream(String stream) {
        flush();
        accepted.remove(stream);
        counters.keySet().removeIf(key -> key.get(1).equals(stream));
        series.forget(stream);
    }

    private Counter counter(String monitor, String stream, String outcome, String reason) {
        MeterRegistry registry = series.registry();
        if (registry == null) {
            return null;
        }
        List<String> tags = List.of(tag(monitor), tag(stream), outcome, tag(reason));
        return counters.computeIfAbsent(tags, key -> series.keep(Counter.builder(OddswatchMeters.RECORDS)
                .description("Consumed records by outcome").baseUnit("records")
                .tags("monitor", key.get(0), "stream", key.get(1), "outcome", key.get(2), "reason", key.get(3))
                .register(registry)));
    }

    private static String tag(String value) {
        return value == null ? OddswatchMeters.NONE : value;
    }
}
