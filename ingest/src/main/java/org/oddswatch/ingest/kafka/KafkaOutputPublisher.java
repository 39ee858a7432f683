package org.oddswatch.ingest.kafka;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.Arrays;
import java.util.List;
import java.util.Properties;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.apache.kafka.common.InvalidRecordException;
import org.apache.kafka.common.errors.RecordBatchTooLargeException;
import org.apache.kafka.common.errors.RecordTooLargeException;
import org.apache.kafka.common.errors.SerializationException;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.Producer;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.OutputSpec;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.RejectedRecord;

/**
 * Sends the pipeline's outputs to the output topics of their monitor with one idempotent producer
 * ({@code enable.idempotence=true}, {@code acks=all}):
 * <ul>
 *   <li>estimates: key {@code <stream>|<windowEnd RFC 3339>}, value the estimate JSON with small
 *       cells withheld ({@link PublishedEstimate}, the monitor's {@code withholdCountsBelow}); an interim and
 *       the final estimate of a window share the key, so a compacted topic keeps the final one;</li>
 *   <li>rejects: key {@code <topic>/<partition>/<offset>} of the source record, value the reject JSON
 *       (reason, detail, source position, the original bytes up to {@value #REJECT_VALUE_LIMIT} bytes:
 *       a longer value is cut there and the reject says {@code valueTruncated: true} with the
 *       original {@code valueBytes}, so a reject always fits the producer's default
 *       {@code max.request.size} of 1 MiB);</li>
 *   <li>alerts: key the alert id, value the alert JSON under the same small-cell rule ({@link PublishedAlert}).</li>
 * </ul>
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
public final class KafkaOutputPublisher implements PipelineListener, AutoCloseable {

    private static final Logger LOG = LoggerFactory.getLogger(KafkaOutputPublisher.class);
    /** Most bytes of a rejected record's value copied into its reject message. */
    public static final int REJECT_VALUE_LIMIT = 32 * 1024;
    /** Most characters of a reject's detail text. */
    static final int REJECT_DETAIL_LIMIT = 2000;

    private final Producer<String, byte[]> producer;
    private final List<MonitorDefinition> monitors;
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
        this.flusher = Executors.newSingleThreadExecutor(task -> {
            Thread thread = new Thread(task, "oddswatch-output-flush");
            thread.setDaemon(true);
            return thread;
        });
    }

    public Producer<String, byte[]> producer() {
        return producer;
    }

    /** The estimates-topic key of an estimate. */
    public static String estimateKey(WindowEstimate estimate) {
        return estimate.stream() + "|" + estimate.windowEnd();
    }

    @Override
    public void onEstimate(WindowEstimate estimate) {
        OutputSpec outputs = outputs(estimate.stream());
        send(outputs.estimatesTopic(), estimateKey(estimate), PublishedEstimate.json(estimate, outputs.smallCells()));
    }

    @Override
    public void onReject(RejectedRecord rejected) {
        RecordOrigin origin = rejected.origin();
        String key = origin.topic() == null ? "line/" + origin.lineNumber()
                : origin.topic() + "/" + origin.partition() + "/" + origin.offset();
        send(rejectsTopic(rejected), key, rejectJson(rejected));
    }

    /**
     * The reject message: the reject's JSON, with a value longer than {@link #REJECT_VALUE_LIMIT}
     * bytes cut at the last whole UTF-8 character before the limit ({@code valueTruncated: true},
     * {@code valueBytes}: the original length) and a detail longer than {@link #REJECT_DETAIL_LIMIT}
     * characters cut likewise. The source record stays addressable by topic, partition and offset.
     */
    static String rejectJson(RejectedRecord rejected) {
        byte[] value = rejected.value();
        String detail = rejected.detail();
        boolean longValue = value != null && value.length > REJECT_VALUE_LIMIT;
        boolean longDetail = detail != null && detail.length() > REJECT_DETAIL_LIMIT;
        if (!longValue && !longDetail) {
            return Json.write(rejected.toJson());
        }
        RejectedRecord bounded = new RejectedRecord(rejected.monitor(), rejected.stream(), rejected.outcome(),
                rejected.reason(), longDetail ? detail.substring(0, REJECT_DETAIL_LIMIT) + "..." : detail,
                rejected.origin(), longValue ? utf8Prefix(value, REJECT_VALUE_LIMIT) : value);
        ObjectNode json = Json.mapper().valueToTree(bounded.toJson());
        if (longValue) {
            json.put("valueTruncated", true);
            json.put("valueBytes", value.length);
        }
        return Json.write(json);
    }

    /** The first bytes of {@code value}, at most {@code limit}, not ending inside a UTF-8 sequence. */
    static byte[] utf8Prefix(byte[] value, int limit) {
        int cut = limit;
        // Step back over continuation bytes (10xxxxxx) to the lead byte, at most three of them.
        for (int i = 0; i < 3 && cut > 0 && (value[cut] & 0xC0) == 0x80; i++) {
            cut--;
        }
        return Arrays.copyOf(value, cut);
    }

    @Override
    public void onAlert(Alert alert) {
        OutputSpec outputs = outputs(alert.stream());
        send(outputs.alertsTopic(), alert.id(), PublishedAlert.json(alert, outputs.smallCells()));
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

    private String rejectsTopic(RejectedRecord rejected) {
        if (rejected.monitor() != null) {
            for (MonitorDefinition monitor : monitors) {
                if (monitor.name().equals(rejected.monitor())) {
                    return monitor.outputs().rejectsTopic();
                }
            }
        }
        // No monitor could be told apart (the record could not be read at all): the first monitor
        // on the source topic receives it, so nothing is lost.
        for (MonitorDefinition monitor : monitors) {
            if (monitor.topic().equals(rejected.origin().topic())) {
                return monitor.outputs().rejectsTopic();
            }
        }
        return monitors.get(0).outputs().rejectsTopic();
    }

    /** The outputs of the monitor a stream belongs to ({@code name} or {@code name/value}). */
    private OutputSpec outputs(String stream) {
        return MonitorDefinition.ofStream(monitors, stream).outputs();
    }

    @Override
    public void close() {
        producer.close(Duration.ofSeconds(10));
        flusher.shutdownNow();
    }
}
