package org.oddswatch.alerts.output;

import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Writes each alert to the log (logger {@code org.oddswatch.alerts}): raised at WARN, continuing and
 * cleared at INFO; the message paragraph first, then the alert JSON as published.
 */
public final class LogSink implements OutputSink {

    private static final Logger LOG = LoggerFactory.getLogger("org.oddswatch.alerts");

    @Override
    public void alert(Alert alert, Published published) {
        if (alert.state() == AlertState.RAISED) {
            LOG.warn("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), published.json());
        } else {
            LOG.info("alert {} {}: {}\n{}", alert.id(), alert.state(), alert.message(), published.json());
        }
    }
}
