package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Timer;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * The service's own meters (the pipeline registers the per-stream ones; the Kafka clients' metrics
 * are bound separately): {@code oddswatch.service.records} by {@code phase} (live or rebuild),
 * {@code oddswatch.service.rebuilds} (partitions rebuilt), {@code oddswatch.service.rebuild.duration}
 * and the {@code oddswatch.service.ready} gauge (1 when ready). Each carries the tag
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
