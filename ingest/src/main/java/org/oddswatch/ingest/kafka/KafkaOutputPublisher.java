package org.oddswatch.ingest.kafka;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.List;
import java.util.Properties;
import java.util.concurrent.atomic.AtomicReference;
import org.apache.kafka.clients.producer.Callback;
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
 *       (reason, detail, source position, original bytes);</li>
 *   <li>alerts: key the alert id, value the alert JSON under the same small-cell rule ({@link PublishedAlert}).</li>
 * </ul>
 * Sends are asynchronous; {@link #flush()} waits for all of them and throws if any failed, so the
 * caller commits input offsets only after every output of those inputs is stored.
 */
public final class KafkaOutputPublisher implements PipelineListener, AutoCloseable {

    private final Producer<String, byte[]> producer;
    private final List<MonitorDefinition> monitors;
    private final AtomicReference<Exception> firstFailure = new AtomicReference<>();
    private final Callback onSent = (metadata, exception) -> {
        if (exception != null) {
            firstFailure.compareAndSet(null, exception);
        }
    };

    public KafkaOutputPublisher(Properties producerProps, List<MonitorDefinition> monitors) {
        this.producer = new KafkaProducer<>(producerProps, new StringSerializer(), new ByteArraySerializer());
        this.monitors = List.copyOf(monitors);
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
        send(rejectsTopic(rejected), key, Json.write(rejected.toJson()));
    }

    @Override
    public void onAlert(Alert alert) {
        OutputSpec outputs = outputs(alert.stream());
        send(outputs.alertsTopic(), alert.id(), PublishedAlert.json(alert, outputs.smallCells()));
    }

    /** Waits until every output sent so far is acknowledged; throws if any send failed. */
    public void flush() {
        producer.flush();
        Exception failure = firstFailure.get();
        if (failure != null) {
            throw new OutputFailedException("an output record could not be stored: " + failure.getMessage(), failure);
        }
    }

    private void send(String topic, String key, String json) {
        Exception failure = firstFailure.get();
        if (failure != null) {
            throw new OutputFailedException("an output record could not be stored: " + failure.getMessage(), failure);
        }
        try {
            producer.send(new ProducerRecord<>(topic, key, json.getBytes(StandardCharsets.UTF_8)), onSent);
        } catch (RuntimeException e) {
            // For instance a missing output topic (metadata wait timed out) or a closed producer.
            throw new OutputFailedException("could not send to " + topic + ": " + e.getMessage(), e);
        }
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
    }

    /** An output could not be written; the service stops without committing the inputs behind it. */
    public static final class OutputFailedException extends RuntimeException {
        public OutputFailedException(String message, Throwable cause) {
            super(message, cause);
        }
    }
}
