package org.oddswatch.alerts.engine;

import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Runs one stream's alert rules and keeps their episode lifecycle. Pure and deterministic: no clock,
 * no I/O, no randomness; the caller feeds final window estimates and scored events in event time.
 * One instance per stream; not thread-safe.
 */
public final class AlertEngine {

    /**
     * @param stream the stream name
     * @param rules the rule settings from the monitor definition
     * @param baseline the frozen or trailing baseline model, or null (rules needing it stay silent)
     * @param replay how to phrase the replay command in alert texts
     */
    public AlertEngine(String stream, AlertRulesConfig rules, BaselineModel baseline, ReplayHint replay) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** Window rules (odds-ratio drift and bounds, calibration) on one final estimate. */
    public List<Alert> onFinalEstimate(WindowEstimate estimate) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * Buffers one accepted complete-case event for the sequential (CUSUM) rule. Events are
     * processed only when their bucket closes, in (event time, id) order, so arrival order within the
     * allowed lateness does not matter.
     *
     * @param row the coded design row (intercept first)
     */
    public void onEvent(long eventTimeMillis, String id, double[] row, boolean positive) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /** Runs the sequential rule over all buffered events with time before {@code closedBeforeMillis}. */
    public List<Alert> onEventsClosed(long closedBeforeMillis) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * Restores open episodes from alerts previously published (read back from the alerts topic or
     * file), so a restart neither forgets an open episode nor publishes it again.
     */
    public void restore(List<Alert> published) {
        throw new UnsupportedOperationException("not implemented yet");
    }
}
