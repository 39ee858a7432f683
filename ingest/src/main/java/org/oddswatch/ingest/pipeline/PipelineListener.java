package org.oddswatch.ingest.pipeline;

import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.decode.DecodedEvent;

/**
 * Receives a pipeline's output, on the thread that called the pipeline. Nothing is reported of
 * records offered with output suppressed (a state rebuild).
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

    /** An event a stream accepted (passed the time rules, the stream cap and dedupe), with its decoding. */
    default void onAccepted(String monitor, String stream, DecodedEvent event) {
    }

    /** One record's outcome in one monitor; {@code stream} is null when the record reached no stream. */
    default void onOutcome(String monitor, String stream, RecordOutcome outcome) {
    }

    /** The records offered since the last call are a finished batch ({@link MonitorPipeline#batchDone}). */
    default void onBatchDone() {
    }

    /** A final window was estimated in {@code fitNanos} of wall-clock time (for meters only). */
    default void onFinalFit(WindowEstimate estimate, long fitNanos) {
    }

    /** A stream's CUSUM chart values after windows were closed (empty list: no CUSUM rule). */
    default void onCusum(String stream, List<CusumReading> readings) {
    }

    /**
     * The alert messages published before a restart, as read back for a pipeline before its rebuild
     * (in the order read; each partition of a topic gets its monitors' alerts, so the same messages may
     * come more than once): for state that spans streams, such as open incidents. Not published again.
     */
    default void onAlertsRestored(List<Alert> published) {
    }

    /** An alert episode still open after a restart (its latest published message), not published again. */
    default void onAlertRestored(Alert alert) {
    }

    /**
     * A final estimate published before a restart, read back for a stream the pipeline holds (its
     * JSON as read), not published again.
     */
    default void onEstimateRestored(WindowEstimate estimate, String publishedJson) {
    }

    /** These streams left the pipeline's owner (its partition was revoked or lost): forget their meters and open items. */
    default void onStreamsReleased(List<String> streams) {
    }
}
