package org.oddswatch.alerts.output;

import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Where outputs go: a topic, a file, the log, a webhook. The output stage decides which monitor an
 * output belongs to and writes its JSON once (small cells withheld); every sink gets the same text.
 * A sink takes only what it publishes (the others are no-ops). Calls come from the thread that runs
 * the pipeline, so a sink must return quickly: one that talks to the network hands the work to its
 * own thread. A live sink never throws on a delivery failure; it logs and counts it.
 *
 * <p>After a restart or a partition hand-over the service rebuilds its state without publishing
 * anything again; what it read back of its earlier outputs and still holds to be current comes to the
 * {@code restored...} methods, with the text as published. A sink that only publishes ignores them
 * (the defaults); a sink that shows what is current (the live page) takes them.
 */
public interface OutputSink extends AutoCloseable {

    /** A window estimate, final or interim ({@link WindowEstimate#status()}). */
    default void estimate(WindowEstimate estimate, Published published) {
    }

    /** An alert message: raised, continuing or cleared. */
    default void alert(Alert alert, Published published) {
    }

    /**
     * An incident message: opened, updated or resolved (the episodes that agree about one change;
     * see {@code IncidentTracker}). Published under the monitor of its first episode's stream.
     */
    default void incident(Incident incident, Published published) {
    }

    /**
     * A rejected or late input record.
     *
     * @param reject the reject with the record's bytes whole (files keep it so)
     * @param messageJson the same reject with a long value or detail cut so that it fits one message
     *     (the same text as {@code reject.json()} when nothing is cut)
     */
    default void reject(Published reject, String messageJson) {
    }

    /**
     * A final window estimate published before a restart, read back from the estimates topic (the
     * newest windows of a stream this service now holds). Not published again.
     *
     * @param published its monitor, key and JSON text as read back
     */
    default void restoredEstimate(WindowEstimate estimate, Published published) {
    }

    /**
     * The latest message of an alert episode still open after a restart (read back from the alerts
     * topic, a stream this service now holds). Not published again.
     */
    default void restoredAlert(Alert alert, Published published) {
    }

    /**
     * The latest message of an incident as the incident tracker restored it after a restart or a
     * hand-over: still open, or {@code resolved} when the record read back ended one it held. Not
     * published again.
     */
    default void restoredIncident(Incident incident, Published published) {
    }

    /** These streams left this service instance (their partition was revoked or lost). */
    default void released(List<String> streams) {
    }

    /** Releases resources; pending deliveries may finish within a short grace period. */
    @Override
    default void close() {
    }

    /**
     * One sink handing every output to each of {@code sinks} in turn. Closing closes them all, then
     * throws the first failure (a {@link RuntimeException}), if any.
     */
    static OutputSink all(OutputSink... sinks) {
        List<OutputSink> each = List.of(sinks);
        return new OutputSink() {
            @Override
            public void estimate(WindowEstimate estimate, Published published) {
                each.forEach(sink -> sink.estimate(estimate, published));
            }

            @Override
            public void alert(Alert alert, Published published) {
                each.forEach(sink -> sink.alert(alert, published));
            }

            @Override
            public void incident(Incident incident, Published published) {
                each.forEach(sink -> sink.incident(incident, published));
            }

            @Override
            public void reject(Published reject, String messageJson) {
                each.forEach(sink -> sink.reject(reject, messageJson));
            }

            @Override
            public void restoredEstimate(WindowEstimate estimate, Published published) {
                each.forEach(sink -> sink.restoredEstimate(estimate, published));
            }

            @Override
            public void restoredAlert(Alert alert, Published published) {
                each.forEach(sink -> sink.restoredAlert(alert, published));
            }

            @Override
            public void restoredIncident(Incident incident, Published published) {
                each.forEach(sink -> sink.restoredIncident(incident, published));
            }

            @Override
            public void released(List<String> streams) {
                each.forEach(sink -> sink.released(streams));
            }

            @Override
            public void close() {
                RuntimeException failure = null;
                for (OutputSink sink : each) {
                    try {
                        sink.close();
                    } catch (RuntimeException e) {
                        failure = failure == null ? e : failure;
                    }
                }
                if (failure != null) {
                    throw failure;
                }
            }
        };
    }
}
