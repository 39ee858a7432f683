package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.MeterRegistry;
import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.metrics.AlertMeters;
import org.oddswatch.alerts.metrics.FitMeters;
import org.oddswatch.alerts.metrics.RecordMeters;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;

/**
 * The service's pipeline listener: passes each estimate, alert and reject to the output stage, then
 * feeds the registry's {@link RecordMeters} (accepted records added once per batch), {@link FitMeters}
 * (final windows, under their monitor's small-cell rule) and {@link AlertMeters}; removes the series
 * of released streams (ingest/KAFKA.md, "Outputs and meters").
 */
final class PipelineMeters implements PipelineListener {

    private final PipelineListener outputs;
    private final List<MonitorDefinition> monitors;
    private final RecordMeters records = new RecordMeters();
    private final FitMeters fits = new FitMeters();
    private final AlertMeters alerts = new AlertMeters();

    /** @param outputs where estimates, alerts and rejects go before they are metered (the output stage) */
    PipelineMeters(PipelineListener outputs, MeterRegistry registry, List<MonitorDefinition> monitors) {
        this.outputs = outputs;
        this.monitors = List.copyOf(monitors);
        records.bindTo(registry);
        fits.bindTo(registry);
        alerts.bindTo(registry);
    }

    @Override
    public void onOutcome(String monitor, String stream, RecordOutcome outcome) {
        if (outcome.accepted() && outcome.reason() == null && stream != null) {
            records.accepted(monitor, stream);
        } else {
            records.count(monitor, stream, outcome.outcome().toString(), outcome.reason());
        }
    }

    @Override
    public void onBatchDone() {
        records.flush();
    }

    @Override
    public void onEstimate(WindowEstimate estimate) {
        outputs.onEstimate(estimate);
        if (estimate.status() == WindowStatus.FINAL) {
            fits.finalEstimate(estimate, MonitorDefinition.ofStream(monitors, estimate.stream()).outputs().smallCells());
        }
    }

    @Override
    public void onFinalFit(WindowEstimate estimate, long fitNanos) {
        fits.fitted(estimate.stream(), fitNanos, estimate.fit() == null ? 0 : estimate.fit().iterations());
    }

    @Override
    public void onReject(RejectedRecord record) {
        outputs.onReject(record);
    }

    @Override
    public void onAlert(Alert alert) {
        outputs.onAlert(alert);
        alerts.alert(alert);
    }

    @Override
    public void onAlertsRestored(List<Alert> published) {
        outputs.onAlertsRestored(published);
    }

    @Override
    public void onAlertRestored(Alert alert) {
        outputs.onAlertRestored(alert);
        alerts.restored(alert);
    }

    @Override
    public void onEstimateRestored(WindowEstimate estimate, String publishedJson) {
        outputs.onEstimateRestored(estimate, publishedJson);
    }

    @Override
    public void onCusum(String stream, List<CusumReading> readings) {
        alerts.cusum(stream, readings);
    }

    @Override
    public void onStreamsReleased(List<String> streams) {
        outputs.onStreamsReleased(streams);
        for (String stream : streams) {
            records.forgetStream(stream);
            fits.forgetStream(stream);
            alerts.forgetStream(stream);
        }
    }
}
