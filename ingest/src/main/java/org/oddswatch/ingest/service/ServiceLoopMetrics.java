package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.MultiGauge;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.LongSupplier;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.StreamStatus;

/**
 * Meters of the service's poll loop, tagged {@value #SERVICE_INSTANCE} with the instance name
 * ({@code instance} is Prometheus's scrape target): records by phase ({@code live}, or {@code rebuild}
 * for the suppressed re-read), rebuilds and their duration (plan to live), readiness, the loop's time
 * per step ({@code poll} and {@code apply} per polled batch, {@code commit} per commit, outputs stored
 * included) and outputs refused; untagged, the multi-gauge {@code oddswatch.monitoring.gaps}: a series
 * per {@link MonitoringGap} (value the final windows not judged for scope {@code windows}, else 1)
 * that goes with its gap or stream. Tags never carry record values.
 */
final class ServiceLoopMetrics implements MeterBinder {

    /** Tag of the service's instance name on the service's and the Kafka clients' meters. */
    static final String SERVICE_INSTANCE = "service_instance";

    private final Tags tags;
    private final LongSupplier refusedOutputs;
    private final AtomicInteger ready = new AtomicInteger();
    private Counter live;
    private Counter rebuild;
    private Counter rebuilds;
    private Timer rebuildDuration;
    private Timer poll;
    private Timer apply;
    private Timer commit;
    private MultiGauge gaps;

    ServiceLoopMetrics(String instance, LongSupplier refusedOutputs) {
        this.tags = Tags.of(Tag.of(SERVICE_INSTANCE, instance));
        this.refusedOutputs = refusedOutputs;
    }

    @Override
    public void bindTo(MeterRegistry registry) {
        FunctionCounter.builder("oddswatch.service.outputs.refused", refusedOutputs, LongSupplier::getAsLong)
                .tags(tags).description("outputs the broker refused for what they are (too large, invalid), skipped")
                .register(registry);
        live = records(registry, "live");
        rebuild = records(registry, "rebuild");
        rebuilds = Counter.builder("oddswatch.service.rebuilds").tags(tags)
                .description("partitions whose state was rebuilt").register(registry);
        rebuildDuration = Timer.builder("oddswatch.service.rebuild.duration").tags(tags)
                .description("time to rebuild one partition's state").register(registry);
        Gauge.builder("oddswatch.service.ready", ready, AtomicInteger::get).tags(tags)
                .description("1 once state is rebuilt and the service is live").register(registry);
        poll = loopStep(registry, "poll");
        apply = loopStep(registry, "apply");
        commit = loopStep(registry, "commit");
        gaps = MultiGauge.builder("oddswatch.monitoring.gaps")
                .description("what a stream does not monitor, by reason: windows not judged, else 1")
                .register(registry);
    }

    private Counter records(MeterRegistry registry, String phase) {
        return Counter.builder("oddswatch.service.records").tag("phase", phase).tags(tags)
                .description("input records consumed").register(registry);
    }

    private Timer loopStep(MeterRegistry registry, String step) {
        return Timer.builder("oddswatch.service.loop").tag("step", step).tags(tags)
                .description("time per polled batch (poll, apply) or per commit in one step of the poll loop")
                .register(registry);
    }

    void polled(long pollNanos, long applyNanos) {
        poll.record(pollNanos, TimeUnit.NANOSECONDS);
        apply.record(applyNanos, TimeUnit.NANOSECONDS);
    }

    void handled(long liveRecords, long rebuildRecords) {
        live.increment(liveRecords);
        rebuild.increment(rebuildRecords);
    }

    void committed(long nanos) {
        commit.record(nanos, TimeUnit.NANOSECONDS);
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

    /** Replaces the gap series by those of the streams in {@code inputs}. */
    void monitoringGaps(List<PipelineSnapshot> inputs) {
        Map<Tags, Double> values = new LinkedHashMap<>();
        for (PipelineSnapshot input : inputs) {
            for (StreamStatus stream : input.streams()) {
                for (MonitoringGap gap : stream.gaps()) {
                    Tags series = Tags.of("monitor", stream.monitor(), "stream", stream.stream(),
                            "scope", gap.scope().label(), "subject", gap.subject() == null ? "none" : gap.subject(),
                            "reason", gap.reason().code());
                    values.merge(series, gap.windows() == null ? 1.0 : gap.windows(), Double::sum);
                }
            }
        }
        gaps.register(values.entrySet().stream().<MultiGauge.Row<?>>map(e -> MultiGauge.Row.of(e.getKey(), e.getValue()))
                .toList(), true);
    }
}
