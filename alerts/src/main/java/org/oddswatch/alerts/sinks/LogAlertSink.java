package org.oddswatch.alerts.sinks;

import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Writes each alert to the log (logger {@code org.oddswatch.alerts}): raised at WARN, continuing and
 * cleared at INFO; the message paragraph first, then the alert JSON.
 */
public final class LogAlertSink implements AlertSink {

    private static final Logger LOG = LoggerFactory.getLogger("org.oddswatch.alerts");

    @Override
    public void publish(Alert alert) {
        if (alert.state() == AlertState.RAISED) {
            LOG.warn("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), Json.write(alert));
        } else {
            LOG.info("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), Json.write(alert));
        }
    }
}
