package org.oddswatch.ingest.kafka;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayDeque;
import java.util.Deque;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import java.util.stream.Collectors;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.clients.producer.RecordMetadata;
import org.apache.kafka.common.InvalidRecordException;
import org.apache.kafka.common.errors.RecordBatchTooLargeException;
import org.apache.kafka.common.errors.RecordTooLargeException;
import org.apache.kafka.common.errors.SerializationException;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutputSpec;
import org.oddswatch.ingest.output.OutputStage;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Sends the {@link OutputStage}'s outputs, with its keys, to their monitor's
 * {@code outputs.estimatesTopic}, {@code alertsTopic} and {@code rejectsTopic} through one
 * idempotent producer. Sends are asynchronous and never throw; sending and {@link #awaitStored}
 * belong to one thread. A record the broker refuses for what it is (too large, invalid) is logged by
 * topic and key, counted ({@link #refused()}) and skipped, since it would fail on every try; any
 * other failure (timeout, missing topic, authorization) loses the output: {@link #storeFailure()}
 * names it, and the caller must produce the outputs since its last commit again.
 */
public final class KafkaOutputPublisher implements OutputSink {

    private static final Logger LOG = LoggerFactory.getLogger(KafkaOutputPublisher.class);
    /** {@link OutputStage#REJECT_VALUE_LIMIT}. */
    public static final int REJECT_VALUE_LIMIT = OutputStage.REJECT_VALUE_LIMIT;

    private final Producer<String, byte[]> producer;
    private final Map<String, OutputSpec> outputs;
    /** Flushes on its own thread, so a wait for acknowledgements is bounded while the broker is away. */
    private final ExecutorService flusher = Executors.newSingleThreadExecutor(task -> {
        Thread thread = new Thread(task, "oddswatch-output-flush");
        thread.setDaemon(true);
        return thread;
    });
    private final Deque<Future<RecordMetadata>> unacknowledged = new ArrayDeque<>();
    private final AtomicReference<Exception> storeFailure = new AtomicReference<>();
    private final AtomicLong refused = new AtomicLong();
    private Future<?> flush;

    public KafkaOutputPublisher(Properties producerProps, List<MonitorDefinition> monitors) {
        this.producer = new KafkaProducer<>(producerProps, new StringSerializer(), new ByteArraySerializer());
        this.outputs = monitors.stream().collect(Collectors.toMap(MonitorDefinition::name, MonitorDefinition::outputs, (a, b) -> b));
    }

    public Producer<String, byte[]> producer() {
        return producer;
    }

    @Override
    public void estimate(WindowEstimate estimate, Published published) {
        send(outputs.get(published.monitor()).estimatesTopic(), published.key(), published.json());
    }

    @Override
    public void alert(Alert alert, Published published) {
        send(outputs.get(published.monitor()).alertsTopic(), published.key(), published.json());
    }

    @Override
    public void reject(Published reject, String messageJson) {
        send(outputs.get(reject.monitor()).rejectsTopic(), reject.key(), messageJson);
    }

    /**
     * Flushes the producer and waits, at most {@code wait}, until every output sent so far is
     * acknowledged or has failed.
     *
     * @return true when nothing is outstanding (see {@link #storeFailure()} for failed ones)
     */
    public boolean awaitStored(Duration wait) {
        if (flush == null || flush.isDone()) {
            flush = flusher.submit(producer::flush);
        }
        long deadline = System.nanoTime() + wait.toNanos();
        for (Future<RecordMetadata> sent; (sent = unacknowledged.peek()) != null; unacknowledged.poll()) {
            try {
                sent.get(deadline - System.nanoTime(), TimeUnit.NANOSECONDS);
            } catch (ExecutionException e) {
                // the send's callback has classified the failure already
            } catch (TimeoutException e) {
                return false;
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                return false;
            }
        }
        return true;
    }

    /** Outputs sent and not acknowledged yet. */
    public long pending() {
        unacknowledged.removeIf(Future::isDone);
        return unacknowledged.size();
    }

    /** The first failure since {@link #clearStoreFailure()} that lost an output (not a refused one), or null. */
    public Exception storeFailure() {
        return storeFailure.get();
    }

    /** Forgets the store failure once the lost outputs are arranged to be produced again. */
    public void clearStoreFailure() {
        storeFailure.set(null);
    }

    /** Outputs the broker refused for what they are (too large, invalid), skipped since start. */
    public long refused() {
        return refused.get();
    }

    private void send(String topic, String key, String json) {
        try {
            unacknowledged.add(producer.send(new ProducerRecord<>(topic, key, json.getBytes(StandardCharsets.UTF_8)),
                    (metadata, exception) -> completed(topic, key, exception)));
        } catch (RuntimeException e) {
            completed(topic, key, e); // a missing topic (max.block.ms passed) or a closed producer
        }
    }

    private void completed(String topic, String key, Exception exception) {
        if (exception instanceof RecordTooLargeException || exception instanceof RecordBatchTooLargeException
                || exception instanceof InvalidRecordException || exception instanceof SerializationException) {
            refused.incrementAndGet();
            LOG.error("the broker refused the output to {} with key {} ({}); it is skipped", topic, key,
                    exception.toString());
        } else if (exception != null) {
            storeFailure.compareAndSet(null, exception);
        }
    }

    @Override
    public void close() {
        producer.close(Duration.ofSeconds(10));
        flusher.shutdownNow();
    }
}
