package org.oddswatch.alerts.sinks;

import org.oddswatch.alerts.lifecycle.Alert;

/**
 * Where alerts go. {@link #publish} must not block ingestion for long: sinks that talk to the
 * network hand the work to their own thread. Sinks must not throw on delivery failure; they count
 * and log it.
 */
public interface AlertSink extends AutoCloseable {

    void publish(Alert alert);

    /** Releases resources; pending deliveries may be finished within a short grace period. */
    @Override
    default void close() {
    }
}
