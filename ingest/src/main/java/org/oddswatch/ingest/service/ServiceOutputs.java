package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.MeterRegistry;
import java.net.URI;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.output.JsonLinesSink;
import org.oddswatch.alerts.output.LogSink;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.WebhookSpec;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;

/**
 * The listener of the live service's pipelines: every output passes the {@link OutputStage}, whose
 * sinks for a monitor are the Kafka publisher, the log (alerts), the monitor's
 * {@code outputs.webhook} (alerts, delivered on the webhook's own thread, so the poll loop never
 * waits for it) and its {@code outputs.estimatesFile} (final estimates appended; a relative path
 * resolves against the definition file's folder); then the {@link PipelineMeters} of the
 * service's registry see the same events.
 */
final class ServiceOutputs implements PipelineListener, AutoCloseable {

    private final OutputStage stage;
    private final PipelineMeters meters;
    private final Map<String, WebhookSink> webhooks = new HashMap<>();
    private final Map<Path, OutputSink> files = new HashMap<>();

    ServiceOutputs(KafkaOutputPublisher publisher, MeterRegistry registry, List<MonitorDefinition> monitors) {
        this.meters = new PipelineMeters(registry, monitors);
        OutputSink log = new LogSink();
        this.stage = new OutputStage(monitors, monitor -> {
            List<OutputSink> sinks = new ArrayList<>(List.of(publisher, log));
            WebhookSpec hook = monitor.outputs().webhook();
            if (hook != null) {
                WebhookSink webhook = new WebhookSink(monitor.name(), URI.create(hook.url()), hook.timeout(),
                        hook.attempts());
                webhook.bindTo(registry);
                webhooks.put(monitor.name(), webhook);
                sinks.add(webhook);
            }
            String file = monitor.outputs().estimatesFile();
            if (file != null) {
                Path dir = monitor.definitionDir();
                Path path = (dir == null ? Path.of(file) : dir.resolve(file)).toAbsolutePath().normalize();
                sinks.add(files.computeIfAbsent(path, JsonLinesSink::appendingEstimates));
            }
            return sinks;
        });
    }

    /** The webhook sink of a monitor, or null when it has none. */
    WebhookSink webhook(String monitor) {
        return webhooks.get(monitor);
    }

    @Override
    public void onEstimate(WindowEstimate estimate) {
        stage.onEstimate(estimate);
        meters.onEstimate(estimate);
    }

    @Override
    public void onReject(RejectedRecord record) {
        stage.onReject(record);
    }

    @Override
    public void onAlert(Alert alert) {
        stage.onAlert(alert);
        meters.onAlert(alert);
    }

    @Override
    public void onOutcome(String monitor, String stream, RecordOutcome outcome) {
        meters.onOutcome(monitor, stream, outcome);
    }

    @Override
    public void onBatchDone() {
        meters.onBatchDone();
    }

    @Override
    public void onFinalFit(WindowEstimate estimate, long fitNanos) {
        meters.onFinalFit(estimate, fitNanos);
    }

    @Override
    public void onCusum(String stream, List<CusumReading> readings) {
        meters.onCusum(stream, readings);
    }

    @Override
    public void onAlertRestored(Alert alert) {
        meters.onAlertRestored(alert);
    }

    @Override
    public void onStreamsReleased(List<String> streams) {
        meters.onStreamsReleased(streams);
    }

    /**
     * Closes the webhooks (each gives queued deliveries up to one timeout) and the estimates files;
     * the Kafka publisher is the service's to close, after the poll loop's last commit.
     */
    @Override
    public void close() {
        webhooks.values().forEach(WebhookSink::close);
        files.values().forEach(OutputSink::close);
    }
}
