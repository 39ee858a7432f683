package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.MultiGauge;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.StreamStatus;

/**
 * The service's own meters (the pipeline registers the per-stream ones; the Kafka clients' metrics
 * are bound separately): {@code oddswatch.service.records} by {@code phase} (live or rebuild),
 * {@code oddswatch.service.rebuilds} (partitions rebuilt), {@code oddswatch.service.rebuild.duration}
 * and the {@code oddswatch.service.ready} gauge (1 when ready), and {@code oddswatch.monitoring.gaps}:
 * one series per thing a stream of this instance does not monitor ({@link MonitoringGap}), tagged
 * {@code monitor}, {@code stream}, {@code scope} ({@code baseline}, {@code rule}, {@code windows},
 * {@code term}), {@code subject} (the rule or term named in the definition, {@code none} for the
 * baseline) and {@code reason} (a code from a fixed set); the value is the number of final windows
 * not judged for {@code windows}, else 1. A series goes away when its gap does or its stream leaves
 * the instance. Tags never carry record values. The service's own meters carry the tag
 * {@value #SERVICE_INSTANCE} (the service's instance name): not {@code instance}, which Prometheus
 * sets to the scrape target and would rename to {@code exported_instance}.
 */
final class ServiceMeters {

    /** Tag of the service's instance name on the service's and the Kafka clients' meters. */
    static final String SERVICE_INSTANCE = "service_instance";

    private final Counter live;
    private final Counter rebuild;
    private final Counter rebuilds;
    private final Timer rebuildDuration;
    private final AtomicInteger ready = new AtomicInteger();
    private final Timer poll;
    private final Timer read;
    private final Timer wait;
    private final Timer apply;
    private final MultiGauge gaps;

    ServiceMeters(MeterRegistry registry, String instance) {
        live = Counter.builder("oddswatch.service.records").tag("phase", "live").tag(SERVICE_INSTANCE, instance)
                .description("input records consumed").register(registry);
        rebuild = Counter.builder("oddswatch.service.records").tag("phase", "rebuild").tag(SERVICE_INSTANCE, instance)
                .description("input records consumed").register(registry);
        rebuilds = Counter.builder("oddswatch.service.rebuilds").tag(SERVICE_INSTANCE, instance)
                .description("partitions whose state was rebuilt").register(registry);
        rebuildDuration = Timer.builder("oddswatch.service.rebuild.duration").tag(SERVICE_INSTANCE, instance)
                .description("time to rebuild one partition's state").register(registry);
        Gauge.builder("oddswatch.service.ready", ready, AtomicInteger::get).tag(SERVICE_INSTANCE, instance)
                .description("1 once state is rebuilt and the service is live").register(registry);
        poll = loopTimer(registry, instance, "poll");
        read = loopTimer(registry, instance, "read");
        wait = loopTimer(registry, instance, "wait");
        apply = loopTimer(registry, instance, "apply");
        gaps = MultiGauge.builder("oddswatch.monitoring.gaps")
                .description("what a stream does not monitor, by reason: windows not judged, else 1")
                .register(registry);
    }

    /** Replaces the gap series by those of the streams in {@code inputs}. */
    void monitoringGaps(List<PipelineSnapshot> inputs) {
        Map<Tags, Double> values = new LinkedHashMap<>();
        for (PipelineSnapshot input : inputs) {
            for (StreamStatus stream : input.streams()) {
                for (MonitoringGap gap : stream.gaps()) {
                    Tags tags = Tags.of("monitor", stream.monitor(), "stream", stream.stream(),
                            "scope", gap.scope().label(), "subject", gap.subject() == null ? "none" : gap.subject(),
                            "reason", gap.reason().code());
                    values.merge(tags, gap.windows() == null ? 1.0 : gap.windows(), Double::sum);
                }
            }
        }
        List<MultiGauge.Row<?>> rows = new ArrayList<>(values.size());
        values.forEach((tags, value) -> rows.add(MultiGauge.Row.of(tags, value)));
        gaps.register(rows, true);
    }

    private static Timer loopTimer(MeterRegistry registry, String instance, String step) {
        return Timer.builder("oddswatch.service.loop").tag("step", step).tag(SERVICE_INSTANCE, instance)
                .description("time per polled batch in one step of the poll loop or its worker").register(registry);
    }

    /** One turn of the poll thread: time in poll, reading its share, waiting for the worker (ns). */
    void pollTurn(long pollNanos, long readNanos, long waitNanos) {
        poll.record(pollNanos, TimeUnit.NANOSECONDS);
        read.record(readNanos, TimeUnit.NANOSECONDS);
        wait.record(waitNanos, TimeUnit.NANOSECONDS);
    }

    /** One batch on the worker: reading the rest and applying all of it (ns). */
    void applied(long nanos) {
        apply.record(nanos, TimeUnit.NANOSECONDS);
    }

    void liveRecords(long count) {
        if (count > 0) {
            live.increment(count);
        }
    }

    void rebuildRecords(long count) {
        if (count > 0) {
            rebuild.increment(count);
        }
    }

    void rebuildStarted(int partitions) {
        rebuilds.increment(partitions);
    }

    void rebuildFinished(long nanos) {
        rebuildDuration.record(nanos, TimeUnit.NANOSECONDS);
    }

    void ready(boolean isReady) {
        ready.set(isReady ? 1 : 0);
    }
}
