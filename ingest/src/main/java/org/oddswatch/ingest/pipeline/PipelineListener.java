package org.oddswatch.ingest.pipeline;

import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.decode.DecodedEvent;

/**
 * Receives a pipeline's output, on the thread that called the pipeline. Write JSON with
 * {@code org.oddswatch.alerts.json.Json.write(...)}; for rejects use {@link RejectedRecord#toJson()}.
 */
public interface PipelineListener {

    /** A final window estimate, or an interim one after {@link MonitorPipeline#emitInterim()}. */
    default void onEstimate(WindowEstimate estimate) {
    }

    /** A rejected or late record. */
    default void onReject(RejectedRecord record) {
    }

    /** An alert message (raised, continuing or cleared). */
    default void onAlert(Alert alert) {
    }

    /**
     * An event a stream accepted (passed the time rules, the stream cap and dedupe), with its
     * decoding: the baseline builder collects these, so it fits exactly the events the pipeline keeps.
     * Not called while rebuilding.
     */
    default void onAccepted(String monitor, String stream, DecodedEvent event) {
    }

    // ---- for meters: none of these is called while rebuilding (suppressed output) ---------------

    /**
     * One record's outcome in one monitor: {@code stream} is null when the record was routed to no
     * stream the monitor holds (rejected before routing, or {@code too-many-streams}: it never names
     * a stream made from a rejected value), {@code monitor} is null when no monitor could read it.
     */
    default void onOutcome(String monitor, String stream, RecordOutcome outcome) {
    }

    /**
     * The records offered since the last call are a batch that is done ({@link MonitorPipeline#batchDone}):
     * a listener that sums per-record work (counters) may add it up here, on the thread that offered
     * the records.
     */
    default void onBatchDone() {
    }

    /** A final window was estimated, taking {@code fitNanos} of wall-clock time (measured for meters only). */
    default void onFinalFit(WindowEstimate estimate, long fitNanos) {
    }

    /** A stream's CUSUM chart values after events were closed (empty list: no CUSUM rule). */
    default void onCusum(String stream, List<CusumReading> readings) {
    }

    /**
     * An alert episode still open after a restart (the latest published message of its rule and
     * subject), from {@link MonitorPipeline#restoreAlerts}; it is not published again.
     */
    default void onAlertRestored(Alert alert) {
    }

    /** These streams left the pipeline's owner (its partition was revoked or lost): forget their meters. */
    default void onStreamsReleased(List<String> streams) {
    }
}
