package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.binder.kafka.KafkaClientMetrics;
import java.net.URI;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.alerts.live.LiveSite;
import org.oddswatch.alerts.output.JsonLinesSink;
import org.oddswatch.alerts.output.LogSink;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.WebhookSpec;
import org.oddswatch.ingest.kafka.KafkaClientSettings;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The live service: one consumer in the configured group, subscribed to the input topics of all
 * monitors and run by a {@link PollLoop} on its own thread; one idempotent producer; one pipeline
 * per assigned partition. Delivery is at least once (ingest/KAFKA.md, "Delivery"): offsets are
 * committed only after the outputs of the records before them are stored. A clean {@link #close()}
 * (also from a SIGTERM hook) commits everything, leaves the group and closes the clients.
 *
 * <p>Each monitor's outputs pass the {@link OutputStage} to its sinks ({@link #sinks}), then the
 * {@link PipelineMeters}; a webhook delivers on its own thread.
 */
public final class MonitorService implements AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(MonitorService.class);

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaConsumer<byte[], byte[]> lookup;
    private final KafkaOutputPublisher publisher;
    private final Map<String, WebhookSink> webhooks = new HashMap<>();
    private final Map<Path, OutputSink> files = new HashMap<>();
    private final LiveHistory history = new LiveHistory();
    private final List<KafkaClientMetrics> clientMetrics;
    private final PollLoop loop;
    private final Thread thread;
    private final CountDownLatch stopped = new CountDownLatch(1);
    private volatile Throwable failure;

    /**
     * @param config the loaded definition (Kafka settings, service settings, monitors)
     * @param registry where the service, pipeline and Kafka client meters go
     * @param instance a name for this instance (client ids, thread name, meter tag)
     */
    public MonitorService(MonitorConfig config, MeterRegistry registry, String instance) {
        KafkaClientSettings settings = new KafkaClientSettings(config.kafka());
        String client = "oddswatch-" + instance;
        this.consumer = new KafkaConsumer<>(settings.consumer(config.service().groupId(), client),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.lookup = new KafkaConsumer<>(settings.reader(client + "-lookup"), new ByteArrayDeserializer(),
                new ByteArrayDeserializer());
        this.publisher = new KafkaOutputPublisher(settings.producer(client + "-out"), config.monitors());
        List<Tag> tags = List.of(Tag.of(ServiceLoopMetrics.SERVICE_INSTANCE, instance));
        this.clientMetrics = List.of(new KafkaClientMetrics(consumer, tags), new KafkaClientMetrics(publisher.producer(), tags));
        clientMetrics.forEach(m -> m.bindTo(registry));
        OutputSink log = new LogSink();
        OutputStage stage = new OutputStage(config.monitors(), monitor -> sinks(monitor, log, registry));
        PipelineMeters listener = new PipelineMeters(stage, registry, config.monitors());
        ServiceLoopMetrics loopMetrics = new ServiceLoopMetrics(instance, publisher::refused);
        loopMetrics.bindTo(registry);
        PartitionPipelines pipelines = new PartitionPipelines(config, PipelineSettings.defaults().withLimits(config.limits()),
                listener, registry);
        this.loop = new PollLoop(config, consumer, lookup, settings.reader(client + "-alerts"), publisher, pipelines,
                loopMetrics);
        this.thread = new Thread(this::runLoop, "oddswatch-poll-" + instance);
    }

    private List<OutputSink> sinks(MonitorDefinition monitor, OutputSink log, MeterRegistry registry) {
        List<OutputSink> sinks = new ArrayList<>(List.of(publisher, log, history));
        WebhookSpec hook = monitor.outputs().webhook();
        if (hook != null) {
            WebhookSink webhook = new WebhookSink(monitor.name(), hook.send(), URI.create(hook.url()), hook.timeout(),
                    hook.attempts());
            webhook.bindTo(registry);
            webhooks.put(monitor.name(), webhook);
            sinks.add(webhook);
        }
        String file = monitor.outputs().estimatesFile();
        if (file != null) {
            Path dir = monitor.definitionDir();
            sinks.add(files.computeIfAbsent((dir == null ? Path.of(file) : dir.resolve(file)).toAbsolutePath().normalize(),
                    path -> {
                        JsonLinesSink sink = JsonLinesSink.appendingEstimates(path);
                        sink.bindFailures(registry, monitor.name());
                        return sink;
                    }));
        }
        return sinks;
    }

    public MonitorService start() {
        thread.start();
        return this;
    }

    private void runLoop() {
        try {
            loop.run();
        } catch (Throwable t) {
            failure = t;
            LOG.error("the poll loop stopped on an error", t);
        } finally {
            closeClients();
            stopped.countDown();
        }
    }

    /** True once every assigned partition's state is rebuilt and the loop is live. */
    public boolean ready() {
        return "ready".equals(loop.snapshot().state());
    }

    /** The latest status snapshot (thread-safe). */
    public ServiceStatus status() {
        return loop.snapshot();
    }

    /** The live page and its API over what this service published and its status (for {@code HttpEndpoints}). */
    public LiveSite site() {
        return new LiveSite(history, this::status);
    }

    /** The error that stopped the loop, or null. */
    public Throwable failure() {
        return failure;
    }

    /** Waits until the loop has stopped (after {@link #close()} or an error); true if it did in time. */
    public boolean awaitStopped(Duration timeout) throws InterruptedException {
        return stopped.await(timeout.toMillis(), TimeUnit.MILLISECONDS);
    }

    /** Stops the loop (outputs stored, offsets committed, group left) and waits for it. */
    @Override
    public void close() {
        loop.stop();
        if (thread.isAlive()) {
            try {
                if (!stopped.await(60, TimeUnit.SECONDS)) {
                    LOG.warn("the poll loop did not stop within 60 s");
                }
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        } else if (thread.getState() == Thread.State.NEW) {
            closeClients();
        }
    }

    /** The webhook sink of a monitor, or null when it has none. */
    WebhookSink webhook(String monitor) {
        return webhooks.get(monitor);
    }

    /** Closes the webhooks (queued deliveries get up to one timeout), the estimates files and the clients. */
    private void closeClients() {
        clientMetrics.forEach(KafkaClientMetrics::close);
        webhooks.values().forEach(WebhookSink::close);
        files.values().forEach(OutputSink::close);
        try {
            consumer.close(CloseOptions.timeout(Duration.ofSeconds(10)));
        } catch (RuntimeException e) {
            LOG.warn("closing the consumer: {}", e.getMessage());
        }
        lookup.close(CloseOptions.timeout(Duration.ofSeconds(5)));
        publisher.close();
    }
}
