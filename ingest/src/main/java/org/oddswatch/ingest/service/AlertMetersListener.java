package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import java.net.URI;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.WeakHashMap;
import java.util.concurrent.ConcurrentHashMap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.alerts.sinks.AlertSink;
import org.oddswatch.alerts.sinks.LogAlertSink;
import org.oddswatch.alerts.sinks.WebhookAlertSink;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.WebhookSpec;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;

/**
 * The listener of the live service's pipelines: every output goes to the Kafka publisher first;
 * then final estimates (under the monitor's small-cell rule), alerts, fits, CUSUM values and record
 * outcomes feed the {@link OddswatchMeters} of the service's registry, and every alert also goes to the log and, when
 * its monitor has {@code outputs.webhook}, to that webhook (delivered on the sink's own thread, so
 * the poll loop never waits for it).
 *
 * <p>Meter updates happen per final window (and per CUSUM close), except the event counter: accepted
 * records are summed per stream and added to their {@link Counter} once per batch
 * ({@link #onBatchDone}, on the thread that offers the records), other outcomes are one increment
 * each. Pipelines call none of these while rebuilding,
 * except {@link #onAlertRestored}, which sets the alert-state gauge of an episode still open in a
 * stream the pipeline holds. When a partition leaves the instance, {@link #onStreamsReleased} removes
 * its streams' series.
 */
final class AlertMetersListener implements PipelineListener, AutoCloseable {

    /** One binder per registry, so several services (or restarts) in one JVM share the gauges. */
    private static final Map<MeterRegistry, OddswatchMeters> BOUND = new WeakHashMap<>();

    private final PipelineListener publisher;
    private final List<MonitorDefinition> monitors;
    private final OddswatchMeters meters;
    private final MeterRegistry registry;
    private final Map<String, AlertSink> logs = new HashMap<>();
    private final Map<String, WebhookAlertSink> webhooks = new HashMap<>();
    private final Map<List<String>, Counter> eventCounters = new ConcurrentHashMap<>();
    /**
     * Accepted records per stream name not yet added to their counter (one of the counters above).
     * Used only by the thread that offers records, which also calls {@link #onBatchDone}.
     */
    private final Map<String, AcceptedCount> acceptedByStream = new HashMap<>();

    AlertMetersListener(PipelineListener publisher, MeterRegistry registry, List<MonitorDefinition> monitors) {
        this.publisher = publisher;
        this.monitors = List.copyOf(monitors);
        this.registry = registry;
        this.meters = metersOf(registry);
        for (MonitorDefinition monitor : monitors) {
            logs.put(monitor.name(), new LogAlertSink(monitor.outputs().smallCells()));
            WebhookSpec hook = monitor.outputs().webhook();
            if (hook != null) {
                webhooks.put(monitor.name(), new WebhookAlertSink(URI.create(hook.url()), hook.timeout(),
                        hook.attempts(), Duration.ofMillis(500), 1000, meters, monitor.outputs().smallCells()));
            }
        }
    }

    /** The registry's {@link OddswatchMeters}, bound on first use. */
    static OddswatchMeters metersOf(MeterRegistry registry) {
        synchronized (BOUND) {
            return BOUND.computeIfAbsent(registry, r -> {
                OddswatchMeters m = new OddswatchMeters();
                m.bindTo(r);
                return m;
            });
        }
    }

    /** The webhook sink of a monitor, or null (for tests and status). */
    WebhookAlertSink webhook(String monitor) {
        return webhooks.get(monitor);
    }

    @Override
    public void onEstimate(WindowEstimate estimate) {
        publisher.onEstimate(estimate);
        if (estimate.status() == WindowStatus.FINAL) {
            meters.onEstimate(estimate, MonitorDefinition.ofStream(monitors, estimate.stream()).outputs().smallCells());
        }
    }

    @Override
    public void onReject(RejectedRecord record) {
        publisher.onReject(record);
    }

    @Override
    public void onAlert(Alert alert) {
        publisher.onAlert(alert);
        meters.onAlert(alert);
        logs.get(monitorOf(alert.stream())).publish(alert);
        WebhookAlertSink hook = webhooks.get(monitorOf(alert.stream()));
        if (hook != null) {
            hook.publish(alert);
        }
    }

    @Override
    public void onOutcome(String monitor, String stream, RecordOutcome outcome) {
        String monitorTag = monitor != null ? monitor : OddswatchMeters.NONE;
        String streamTag = stream != null ? stream : OddswatchMeters.NONE;
        if (outcome.reason() == null && outcome.accepted() && stream != null) {
            // The common case, once per accepted record: a plain count, added to the stream's
            // counter once per batch (onBatchDone); an atomic add per record took about an eighth
            // of the worker thread's samples in a flight recording of the ingest benchmark.
            AcceptedCount count = acceptedByStream.get(stream);
            if (count == null) {
                count = new AcceptedCount(eventCounter(monitorTag, streamTag, outcome.outcome().toString(),
                        OddswatchMeters.NONE));
                acceptedByStream.put(stream, count);
            }
            count.pending++;
            return;
        }
        String reason = outcome.reason() == null ? OddswatchMeters.NONE : outcome.reason();
        eventCounter(monitorTag, streamTag, outcome.outcome().toString(), reason).increment();
    }

    /** A stream's accepted-events counter and the accepted records not yet added to it. */
    private static final class AcceptedCount {
        final Counter counter;
        long pending;

        AcceptedCount(Counter counter) {
            this.counter = counter;
        }
    }

    /** Adds the accepted records of the batch to their counters. */
    @Override
    public void onBatchDone() {
        for (AcceptedCount count : acceptedByStream.values()) {
            if (count.pending > 0) {
                count.counter.increment(count.pending);
                count.pending = 0;
            }
        }
    }

    private Counter eventCounter(String monitor, String stream, String outcome, String reason) {
        return eventCounters.computeIfAbsent(List.of(monitor, stream, outcome, reason),
                key -> OddswatchMeters.eventCounter(registry, key.get(0), key.get(1), key.get(2), key.get(3)));
    }

    @Override
    public void onFinalFit(WindowEstimate estimate, long fitNanos) {
        meters.recordFit(estimate.stream(), fitNanos, estimate.fit() == null ? 0 : estimate.fit().iterations());
    }

    @Override
    public void onCusum(String stream, List<CusumReading> readings) {
        if (!readings.isEmpty()) {
            meters.onCusum(stream, readings);
        }
    }

    @Override
    public void onAlertRestored(Alert alert) {
        meters.onAlert(alert);
    }

    /**
     * Removes the released streams' series: their gauges, CUSUM and alert-state values, fit timers
     * and record counters (with the cached counters, so a stream that returns counts on new ones).
     * Called on the poll thread after the worker's batch is done, so no accepted count is pending.
     */
    @Override
    public void onStreamsReleased(List<String> streams) {
        for (String stream : streams) {
            onBatchDone();
            acceptedByStream.remove(stream);
            eventCounters.keySet().removeIf(key -> key.get(1).equals(stream));
            meters.forgetStream(stream);
        }
    }

    /** Stream names are {@code monitor} or {@code monitor/split value}; monitor names hold no '/'. */
    private static String monitorOf(String stream) {
        int slash = stream.indexOf('/');
        return slash < 0 ? stream : stream.substring(0, slash);
    }

    /** Stops the webhook threads, giving queued deliveries up to one timeout. */
    @Override
    public void close() {
        for (WebhookAlertSink hook : new ArrayList<>(webhooks.values())) {
            hook.close();
        }
        logs.values().forEach(AlertSink::close);
    }
}
