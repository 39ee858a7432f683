package org.oddswatch.ingest.pipeline;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.result.WindowEstimate;

/** Keeps everything a pipeline emits, in order. */
class CollectingListener implements PipelineListener {

    final List<WindowEstimate> estimates = new ArrayList<>();
    final List<RejectedRecord> rejects = new ArrayList<>();
    final List<Alert> alerts = new ArrayList<>();

    @Override
    public void onEstimate(WindowEstimate estimate) {
        estimates.add(estimate);
    }

    @Override
    public void onReject(RejectedRecord record) {
        rejects.add(record);
    }

    @Override
    public void onAlert(Alert alert) {
        alerts.add(alert);
    }
}
