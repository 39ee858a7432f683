package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.binder.kafka.KafkaClientMetrics;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.oddswatch.alerts.live.LiveSite;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.kafka.KafkaClientSettings;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The live service: one consumer in the configured group, subscribed to the input topics of all
 * monitors, its {@link PollLoop} on one thread; one idempotent producer for estimates, rejects and
 * alerts; one pipeline per assigned partition; {@link ServiceOutputs} for what the pipelines report.
 *
 * <p>Delivery is at least once: input offsets are committed only after every output of the records
 * before them is acknowledged, so after a crash the records since the last commit are processed and
 * their outputs sent again, with the same keys and (final estimates, alerts) the same content. A
 * clean {@link #close()} (also from a SIGTERM hook) commits everything, leaves the group and closes
 * the clients.
 */
public final class MonitorService implements AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(MonitorService.class);

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaConsumer<byte[], byte[]> lookup;
    private final KafkaOutputPublisher publisher;
    private final ServiceOutputs outputs;
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
        this.consumer = new KafkaConsumer<>(settings.consumer(config.service().groupId(), "oddswatch-" + instance),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.lookup = new KafkaConsumer<>(settings.reader("oddswatch-" + instance + "-lookup"),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.publisher = new KafkaOutputPublisher(settings.producer("oddswatch-" + instance + "-out"), config.monitors());
        List<Tag> tags = List.of(Tag.of(ServiceLoopMetrics.SERVICE_INSTANCE, instance));
        this.clientMetrics = List.of(new KafkaClientMetrics(consumer, tags), new KafkaClientMetrics(publisher.producer(), tags));
        clientMetrics.forEach(m -> m.bindTo(registry));
        this.outputs = new ServiceOutputs(publisher, registry, config.monitors());
        ServiceLoopMetrics loopMetrics = new ServiceLoopMetrics(instance, publisher::refused);
        loopMetrics.bindTo(registry);
        PipelineSettings pipelineSettings = PipelineSettings.defaults().withLimits(config.limits());
        this.loop = new PollLoop(config, consumer, lookup, settings.reader("oddswatch-" + instance + "-alerts"),
                publisher, new PartitionPipelines(config, pipelineSettings, outputs.listener(), registry), loopMetrics);
        this.thread = new Thread(this::runLoop, "oddswatch-poll-" + instance);
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
        return new LiveSite(outputs.history(), this::status);
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
        return outputs.webhook(monitor);
    }

    private void closeClients() {
        clientMetrics.forEach(KafkaClientMetrics::close);
        outputs.close();
        try {
            consumer.close(CloseOptions.timeout(Duration.ofSeconds(10)));
        } catch (RuntimeException e) {
            LOG.warn("closing the consumer: {}", e.getMessage());
        }
        lookup.close(CloseOptions.timeout(Duration.ofSeconds(5)));
        publisher.close();
    }
}
