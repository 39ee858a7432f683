package org.oddswatch.ingest.pipeline;

import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.result.WindowEstimate;

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
}
