package org.oddswatch.alerts.output;

import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentChange;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Writes each incident message to the log (logger {@code org.oddswatch.alerts}): opened and updated
 * at WARN, resolved at INFO; the message paragraph first, then the incident JSON as published. The
 * episodes' own alert messages are not logged one by one: they are on the alerts topic (and in a
 * replay's {@code alerts.jsonl}), and the incident lists each of them as evidence.
 */
public final class LogSink implements OutputSink {

    private static final Logger LOG = LoggerFactory.getLogger("org.oddswatch.alerts");

    @Override
    public void incident(Incident incident, Published published) {
        if (incident.change() == IncidentChange.RESOLVED) {
            LOG.info("incident {} {}: {}\n{}", incident.id(), incident.change(), incident.message(), published.json());
        } else {
            LOG.warn("incident {} {}: {}\n{}", incident.id(), incident.change(), incident.message(), published.json());
        }
    }
}
