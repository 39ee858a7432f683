package org.oddswatch.alerts.output;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.LinkedHashMap;
import java.util.Map;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * JSON Lines files, one output per line as published: final window estimates (interim ones are
 * not written), alerts, incident messages, and rejects with the record's bytes whole. Two uses:
 * <ul>
 *   <li>{@link #replayFiles}: a replay's {@code estimates.jsonl}, {@code alerts.jsonl},
 *       {@code rejects.jsonl} and (when given) {@code incidents.jsonl}, created afresh; an I/O error ends the replay
 *       ({@link UncheckedIOException});</li>
 *   <li>{@link #appendingEstimates}: the live service's {@code outputs.estimatesFile}, final
 *       estimates appended and flushed line by line; an I/O error is logged at ERROR and the line is
 *       lost to this file only (it is still on the estimates topic), so a full disk cannot stop the
 *       service. Delivery is at least once like the topic's: after a crash or a rebuild a final
 *       estimate may be appended again with the same content, so a reader keeps the last line per
 *       {@code stream} and {@code windowEnd}.</li>
 * </ul>
 */
public final class JsonLinesSink implements OutputSink {

    private static final Logger LOG = LoggerFactory.getLogger(JsonLinesSink.class);

    private final Path estimates;
    private final Path alerts;
    private final Path rejects;
    private final Path incidents;
    private final boolean live;
    private final Map<Path, Writer> writers = new LinkedHashMap<>();
    /** Lines a live sink could not append (each also logged at ERROR). */
    private final java.util.concurrent.atomic.AtomicLong failedLines = new java.util.concurrent.atomic.AtomicLong();

    private JsonLinesSink(Path estimates, Path alerts, Path rejects, Path incidents, boolean live) {
        this.estimates = estimates;
        this.alerts = alerts;
        this.rejects = rejects;
        this.incidents = incidents;
        this.live = live;
    }

    /** The three files of a replay, each created (or emptied) now; incidents are not written. */
    public static JsonLinesSink replayFiles(Path estimates, Path alerts, Path rejects) throws IOException {
        return replayFiles(estimates, alerts, rejects, null);
    }

    /** The files of a replay, each created (or emptied) now; {@code incidents} may be null (not written). */
    public static JsonLinesSink replayFiles(Path estimates, Path alerts, Path rejects, Path incidents)
            throws IOException {
        JsonLinesSink sink = new JsonLinesSink(estimates, alerts, rejects, incidents, false);
        for (Path file : new Path[] {estimates, alerts, rejects, incidents}) {
            if (file == null) {
                continue;
            }
            sink.writers.put(file, new BufferedWriter(Files.newBufferedWriter(file, StandardCharsets.UTF_8), 1 << 16));
        }
        return sink;
    }

    /** Final estimates appended to {@code file} (created with its folders on the first one). */
    public static JsonLinesSink appendingEstimates(Path file) {
        return new JsonLinesSink(file, null, null, null, true);
    }

    @Override
    public void estimate(WindowEstimate estimate, Published published) {
        if (estimate.status() == WindowStatus.FINAL) {
            line(estimates, published.json());
        }
    }

    @Override
    public void alert(Alert alert, Published published) {
        line(alerts, published.json());
    }

    @Override
    public void incident(Incident incident, Published published) {
        line(incidents, published.json());
    }

    @Override
    public void reject(Published reject, String messageJson) {
        line(rejects, reject.json());
    }

    private void line(Path file, String json) {
        if (file == null) {
            return;
        }
        try {
            Writer writer = writers.get(file);
            if (writer == null) {
                writer = open(file);
                writers.put(file, writer);
            }
            writer.write(json);
            writer.write('\n');
            if (live) {
                writer.flush();
            }
        } catch (IOException e) {
            if (!live) {
                throw new UncheckedIOException(e);
            }
            failedLines.incrementAndGet();
            LOG.error("could not append to {} ({}); this line is only on the topic", file, e.toString());
            closeQuietly(writers.remove(file));
        }
    }

    /**
     * Registers {@link OddswatchMeters#FILE_FAILURES} for this live sink: the lines it could not
     * append, so a file that stopped taking estimates shows on {@code /metrics}, not only in the log.
     */
    public void bindFailures(io.micrometer.core.instrument.MeterRegistry registry, String monitor) {
        io.micrometer.core.instrument.FunctionCounter.builder(OddswatchMeters.FILE_FAILURES, failedLines,
                java.util.concurrent.atomic.AtomicLong::get)
                .description("Lines that could not be appended to an estimates file").tags("monitor", monitor)
                .register(registry);
    }

    private static Writer open(Path file) throws IOException {
        Path dir = file.toAbsolutePath().getParent();
        if (dir != null) {
            Files.createDirectories(dir);
        }
        return Files.newBufferedWriter(file, StandardCharsets.UTF_8, StandardOpenOption.CREATE,
                StandardOpenOption.APPEND);
    }

    private static void closeQuietly(Writer writer) {
        try {
            if (writer != null) {
                writer.close();
            }
        } catch (IOException e) {
            LOG.debug("closing after a failed write: {}", e.toString());
        }
    }

    /** Flushes and closes the files; in a replay a failure to do so is thrown. */
    @Override
    public void close() {
        IOException failure = null;
        for (Writer writer : writers.values()) {
            try {
                writer.close();
            } catch (IOException e) {
                failure = failure == null ? e : failure;
            }
        }
        writers.clear();
        if (failure != null && !live) {
            throw new UncheckedIOException(failure);
        }
    }
}
