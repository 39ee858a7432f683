package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.MeterRegistry;
import java.net.URI;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.output.JsonLinesSink;
import org.oddswatch.alerts.output.LogSink;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.WebhookSpec;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.PipelineListener;

/**
 * What the live service's pipelines report to ({@link #listener()}): the {@link OutputStage}, whose
 * sinks for a monitor are the Kafka publisher, the log (incidents), the monitor's {@code outputs.webhook}
 * (incidents, or every alert with {@code send: episodes}; delivered on the webhook's own thread) and its {@code outputs.estimatesFile} (final
 * estimates appended; a relative path resolves against the definition file's folder), then the
 * {@link PipelineMeters} of the registry.
 */
final class ServiceOutputs implements AutoCloseable {

    private final PipelineMeters listener;
    private final Map<String, WebhookSink> webhooks = new HashMap<>();
    private final Map<Path, OutputSink> files = new HashMap<>();

    ServiceOutputs(KafkaOutputPublisher publisher, MeterRegistry registry, List<MonitorDefinition> monitors) {
        OutputSink log = new LogSink();
        OutputStage stage = new OutputStage(monitors, monitor -> {
            List<OutputSink> sinks = new ArrayList<>(List.of(publisher, log));
            WebhookSpec hook = monitor.outputs().webhook();
            if (hook != null) {
                WebhookSink webhook = new WebhookSink(monitor.name(), hook.send(), URI.create(hook.url()),
                        hook.timeout(), hook.attempts());
                webhook.bindTo(registry);
                webhooks.put(monitor.name(), webhook);
                sinks.add(webhook);
            }
            String file = monitor.outputs().estimatesFile();
            if (file != null) {
                Path dir = monitor.definitionDir();
                Path path = (dir == null ? Path.of(file) : dir.resolve(file)).toAbsolutePath().normalize();
                OutputSink sink = files.computeIfAbsent(path, p -> {
                    JsonLinesSink created = JsonLinesSink.appendingEstimates(p);
                    created.bindFailures(registry, monitor.name());
                    return created;
                });
                sinks.add(sink);
            }
            return sinks;
        });
        this.listener = new PipelineMeters(stage, registry, monitors);
    }

    /** The listener to give every pipeline of the service. */
    PipelineListener listener() {
        return listener;
    }

    /** The webhook sink of a monitor, or null when it has none. */
    WebhookSink webhook(String monitor) {
        return webhooks.get(monitor);
    }

    /** Closes the webhooks (queued deliveries get up to one timeout) and the estimates files, not the publisher. */
    @Override
    public void close() {
        webhooks.values().forEach(WebhookSink::close);
        files.values().forEach(OutputSink::close);
    }
}
