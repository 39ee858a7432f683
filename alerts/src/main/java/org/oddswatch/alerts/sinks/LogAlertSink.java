package org.oddswatch.alerts.sinks;

import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Writes each alert to the log (logger {@code org.oddswatch.alerts}): raised at WARN, continuing and
 * cleared at INFO; the message paragraph first, then the alert JSON.
 */
public final class LogAlertSink implements AlertSink {

    private static final Logger LOG = LoggerFactory.getLogger("org.oddswatch.alerts");

    private final SmallCellPolicy cells;

    /** With the default small-cell limit. */
    public LogAlertSink() {
        this(SmallCellPolicy.DEFAULT);
    }

    /** Logs the alert JSON under a monitor's small-cell rule ({@link PublishedAlert}). */
    public LogAlertSink(SmallCellPolicy cells) {
        this.cells = cells;
    }

    @Override
    public void publish(Alert alert) {
        String json = PublishedAlert.json(alert, cells);
        if (alert.state() == AlertState.RAISED) {
            LOG.warn("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), json);
        } else {
            LOG.info("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), json);
        }
    }
}
