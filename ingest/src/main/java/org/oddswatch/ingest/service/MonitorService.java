package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.binder.kafka.KafkaClientMetrics;
import java.time.Duration;
import java.util.List;
import java.util.Locale;
import java.util.Properties;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import java.util.function.LongSupplier;
import org.apache.kafka.clients.consumer.CloseOptions;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.kafka.KafkaClientSettings;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The live service: one Kafka consumer in the configured group, subscribed to the input topics of
 * all monitors, with its poll loop on one thread ({@link PollLoop}: records are decoded and applied
 * there, in poll order), one idempotent producer for estimates, rejects and alerts, and one pipeline
 * per assigned partition ({@link PartitionPipelines}). {@link ServiceOutputs} holds what the
 * pipelines report to: the output stage (topics, log, webhook, estimates file), then the meters of
 * the registry.
 *
 * <p>Delivery: at least once. Input offsets are committed synchronously only after every output
 * caused by the records before them is acknowledged, so after a crash the records after the last
 * commit are processed again and their outputs sent again, with the same keys and (for final
 * estimates and alerts) the same content: consumers that keep the latest value per estimate key
 * ({@code <stream>|<windowEnd>}) or per alert id see each one once. A clean stop ({@link #close()})
 * commits everything, so nothing is sent twice.
 *
 * <p>Lifecycle: {@link #start()} starts the loop; the service is {@linkplain #ready() ready} after
 * its partitions are assigned and their state rebuilt; {@link #close()} (also from a SIGTERM hook)
 * wakes the loop up, commits, leaves the group and closes the clients.
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
        this(config, PipelineSettings.defaults().withLimits(config.limits()), registry, instance, Duration.ofMillis(500),
                System::currentTimeMillis);
    }

    /**
     * @param pipelineSettings record limits, baseline reader and replay hint for the pipelines
     * @param commitInterval how often outputs are flushed and offsets committed (also on revoke and stop)
     * @param wallClockMillis the wall clock, used only for the idle timeout and an empty-group start at "latest"
     */
    public MonitorService(MonitorConfig config, PipelineSettings pipelineSettings, MeterRegistry registry,
                          String instance, Duration commitInterval, LongSupplier wallClockMillis) {
        KafkaClientSettings settings = new KafkaClientSettings(config.kafka());
        Properties consumerProps = settings.consumer(config.service().groupId(), "oddswatch-" + instance);
        boolean classicProtocol = !"consumer".equalsIgnoreCase(
                String.valueOf(consumerProps.getOrDefault(ConsumerConfig.GROUP_PROTOCOL_CONFIG, "classic")));
        if (classicProtocol) {
            // (With group.protocol=consumer the broker assigns partitions; no client-side assignor.)
            consumerProps.putIfAbsent(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG,
                    CooperativeStickyAssignor.class.getName());
        }
        // Enough records per poll to take a whole fetch at once: the consumer sends the next fetch
        // only once a partition's fetched data is used up, so this overlaps the fetch with the work
        // on the records (measured in IngestThroughputBenchmarkTest). A batch of 50,000 records
        // takes roughly 30 MB of heap while it is worked on (estimated from object sizes).
        consumerProps.putIfAbsent(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, "50000");
        // Larger fetches per partition: one stream's events come from one partition, so fewer round
        // trips while the poll thread is busy decoding (measured in IngestThroughputBenchmarkTest).
        consumerProps.putIfAbsent(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, Integer.toString(4 << 20));
        // The classic consumer reads its socket only inside poll, so a fetch response can arrive
        // only as fast as the socket's receive buffer takes it while the poll thread is reading:
        // -1 leaves the buffer to the operating system's autotuning, which lets the whole next
        // fetch arrive meanwhile (Kafka's default is a fixed 64 KiB; measured in
        // IngestThroughputBenchmarkTest: poll time per event fell by about a third).
        consumerProps.putIfAbsent(ConsumerConfig.RECEIVE_BUFFER_CONFIG, "-1");
        boolean latest = "latest".equals(String.valueOf(consumerProps.get(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG))
                .toLowerCase(Locale.ROOT));
        this.consumer = new KafkaConsumer<>(consumerProps, new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.lookup = new KafkaConsumer<>(settings.reader("oddswatch-" + instance + "-lookup"),
                new ByteArrayDeserializer(), new ByteArrayDeserializer());
        this.publisher = new KafkaOutputPublisher(settings.producer("oddswatch-" + instance + "-out"), config.monitors());
        List<Tag> tags = List.of(Tag.of(ServiceLoopMetrics.SERVICE_INSTANCE, instance));
        this.clientMetrics = List.of(new KafkaClientMetrics(consumer, tags), new KafkaClientMetrics(publisher.producer(), tags));
        clientMetrics.forEach(m -> m.bindTo(registry));
        // an output the broker refused for what it is is skipped (one output must not stop the
        // service): counted here, so a dropped output shows on /metrics and not only in the log
        FunctionCounter.builder("oddswatch.service.outputs.refused", publisher, KafkaOutputPublisher::refused)
                .tags(tags).description("outputs the broker refused for what they are (too large, invalid), skipped")
                .register(registry);
        AlertArchive archive = new AlertArchive(settings.reader("oddswatch-" + instance + "-alerts"), Duration.ofSeconds(30));
        this.outputs = new ServiceOutputs(publisher, registry, config.monitors());
        // The poll loop, its pipelines (one per assigned partition) and its meters.
        ServiceLoopMetrics loopMetrics = new ServiceLoopMetrics(instance);
        loopMetrics.bindTo(registry);
        this.loop = new PollLoop(config, consumer, lookup, publisher,
                new PartitionPipelines(config, pipelineSettings, outputs.listener(), registry), archive, loopMetrics,
                commitInterval, latest, wallClockMillis);
        this.thread = new Thread(this::runLoop, "oddswatch-poll-" + instance);
    }

    /** Starts the poll loop thread. */
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

    /** The error that stopped the loop, or null. */
    public Throwable failure() {
        return failure;
    }

    /** Waits until the loop has stopped (after {@link #close()} or an error); true if it did in time. */
    public boolean awaitStopped(Duration timeout) throws InterruptedException {
        return stopped.await(timeout.toMillis(), TimeUnit.MILLISECONDS);
    }

    /** Stops the loop (outputs flushed, offsets committed, group left) and waits for it. */
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
