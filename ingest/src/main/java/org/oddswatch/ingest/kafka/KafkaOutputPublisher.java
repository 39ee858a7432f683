package org.oddswatch.ingest.kafka;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;
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
import org.oddswatch.ingest.pipeline.RejectedRecord;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Sends outputs, as the {@link OutputStage} published them, to the output topics of their monitor
 * with one idempotent producer ({@code enable.idempotence=true}, {@code acks=all}): estimates to
 * {@code outputs.estimatesTopic}, alerts to {@code outputs.alertsTopic}, rejects (as messages cut to
 * fit, see {@link OutputStage}) to {@code outputs.rejectsTopic}, each with the stage's key.
 * Sends are asynchronous and never throw. {@link #awaitStored(Duration)} waits, for at most the
 * given time, until every output sent so far is acknowledged, so the caller commits input offsets
 * only after every output of those inputs is stored. Two kinds of failure are told apart:
 * <ul>
 *   <li>the broker refuses one record for what it is (too large, invalid): that output is logged by
 *       topic and key, counted ({@link #refused()}) and skipped; it would fail again on every try,
 *       and one output must not stop the service;</li>
 *   <li>any other failure (timeouts, an unreachable or missing topic, authorization): the output is
 *       lost to the producer, {@link #storeFailure()} names it, and the caller must produce the
 *       outputs since its last commit again (the service rebuilds from the commit).</li>
 * </ul>
 */
public final class KafkaOutputPublisher implements OutputSink {

    private static final Logger LOG = LoggerFactory.getLogger(KafkaOutputPublisher.class);
    /** Most bytes of a rejected record's value copied into its reject message. */
    public static final int REJECT_VALUE_LIMIT = OutputStage.REJECT_VALUE_LIMIT;

    private final Producer<String, byte[]> producer;
    private final List<MonitorDefinition> monitors;
    private final Map<String, OutputSpec> outputs = new HashMap<>();
    private final ExecutorService flusher;
    private final Object lock = new Object();
    private long pending; // guarded by lock
    private Exception storeFailure; // guarded by lock
    private final AtomicLong refused = new AtomicLong();
    private final AtomicBoolean flushing = new AtomicBoolean();

    public KafkaOutputPublisher(Properties producerProps, List<MonitorDefinition> monitors) {
        this(new KafkaProducer<>(producerProps, new StringSerializer(), new ByteArraySerializer()), monitors);
    }

    KafkaOutputPublisher(Producer<String, byte[]> producer, List<MonitorDefinition> monitors) {
        this.producer = producer;
        this.monitors = List.copyOf(monitors);
        monitors.forEach(monitor -> outputs.put(monitor.name(), monitor.outputs()));
        this.flusher = Executors.newSingleThreadExecutor(task -> {
            Thread thread = new Thread(task, "oddswatch-output-flush");
            thread.setDaemon(true);
            return thread;
        });
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
     * Waits until every output sent so far is acknowledged or has failed, for at most {@code wait}
     * (the producer is flushed on its own thread meanwhile, so the wait is bounded even while the
     * broker is away).
     *
     * @return true when nothing is outstanding (see {@link #storeFailure()} for failed ones)
     */
    public boolean awaitStored(Duration wait) {
        if (flushing.compareAndSet(false, true)) {
            try {
                flusher.execute(() -> {
                    try {
                        producer.flush();
                    } catch (RuntimeException e) {
                        LOG.debug("producer flush: {}", e.toString());
                    } finally {
                        flushing.set(false);
                    }
                });
            } catch (RejectedExecutionException e) {
                flushing.set(false);
            }
        }
        long deadline = System.nanoTime() + wait.toNanos();
        synchronized (lock) {
            while (pending > 0) {
                long left = deadline - System.nanoTime();
                if (left <= 0) {
                    return false;
                }
                try {
                    TimeUnit.NANOSECONDS.timedWait(lock, left);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    return false;
                }
            }
            return true;
        }
    }

    /** Outputs sent and not acknowledged yet. */
    public long pending() {
        synchronized (lock) {
            return pending;
        }
    }

    /**
     * The first failure since the last {@link #clearStoreFailure()} that lost an output which must
     * be produced again (not a refused record), or null.
     */
    public Exception storeFailure() {
        synchronized (lock) {
            return storeFailure;
        }
    }

    /** Forgets the store failure once the caller has arranged for the lost outputs to be produced again. */
    public void clearStoreFailure() {
        synchronized (lock) {
            storeFailure = null;
        }
    }

    /** Outputs the broker refused for what they are (too large, invalid), skipped since start. */
    public long refused() {
        return refused.get();
    }

    private void send(String topic, String key, String json) {
        synchronized (lock) {
            pending++;
        }
        try {
            producer.send(new ProducerRecord<>(topic, key, json.getBytes(StandardCharsets.UTF_8)),
                    (metadata, exception) -> completed(topic, key, exception));
        } catch (RuntimeException e) {
            // For instance a missing output topic (the metadata wait of max.block.ms passed) or a
            // closed producer.
            completed(topic, key, e);
        }
    }

    private void completed(String topic, String key, Exception exception) {
        if (exception != null && refusedForItself(exception)) {
            refused.incrementAndGet();
            LOG.error("the broker refused the output to {} with key {} ({}); it is skipped", topic, key,
                    exception.toString());
            exception = null;
        }
        synchronized (lock) {
            pending--;
            if (exception != null && storeFailure == null) {
                storeFailure = exception;
            }
            lock.notifyAll();
        }
    }

    /** A failure caused by the record itself, which would recur on every try. */
    private static boolean refusedForItself(Exception e) {
        return e instanceof RecordTooLargeException || e instanceof RecordBatchTooLargeException
                || e instanceof InvalidRecordException || e instanceof SerializationException;
    }

    @Override
    public void close() {
        producer.close(Duration.ofSeconds(10));
        flusher.shutdownNow();
    }
}
