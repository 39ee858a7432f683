package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicReference;

/**
 * The per-stream series one binder registered, so that they can be removed when their stream leaves
 * the instance ({@link #forget}): a scrape then shows only the streams this instance holds. A stream
 * that comes back starts new series (counters from zero, which Prometheus' {@code rate} reads as a
 * restart). Every meter kept here carries a {@code stream} tag.
 */
final class StreamMeters {

    private volatile MeterRegistry registry;
    private final Map<GaugeKey, AtomicReference<Double>> gauges = new ConcurrentHashMap<>();
    private final Set<Meter> meters = ConcurrentHashMap.newKeySet();

    private record GaugeKey(String name, Tags tags) {
    }

    void bindTo(MeterRegistry registry) {
        this.registry = registry;
    }

    /** The registry, or null before binding (updates are then ignored). */
    MeterRegistry registry() {
        return registry;
    }

    /** Keeps a meter the binder registered, for {@link #forget}. */
    <M extends Meter> M keep(M meter) {
        meters.add(meter);
        return meter;
    }

    /** Sets a gauge, registering it on first use; null (a figure withheld or not computed) reads NaN. */
    void set(String name, String description, String unit, Tags tags, Double value) {
        MeterRegistry r = registry;
        if (r == null) {
            return;
        }
        AtomicReference<Double> holder = gauges.computeIfAbsent(new GaugeKey(name, tags), key -> {
            AtomicReference<Double> h = new AtomicReference<>(Double.NaN);
            keep(Gauge.builder(name, h, ref -> Objects.requireNonNullElse(ref.get(), Double.NaN))
                    .description(description).baseUnit(unit).tags(tags).strongReference(true).register(r));
            return h;
        });
        holder.set(value == null ? Double.NaN : value);
    }

    /** Removes every series of {@code stream} from the registry. */
    void forget(String stream) {
        MeterRegistry r = registry;
        if (r == null) {
            return;
        }
        gauges.keySet().removeIf(key -> stream.equals(key.tags().stream()
                .filter(t -> t.getKey().equals("stream")).map(t -> t.getValue()).findFirst().orElse(null)));
        for (Meter meter : Set.copyOf(meters)) {
            if (stream.equals(meter.getId().getTag("stream"))) {
                meters.remove(meter);
                r.remove(meter);
            }
        }
    }
}
