package org.oddswatch.ingest.definition;

import java.time.Duration;
import org.oddswatch.alerts.output.WebhookSink;

/**
 * {@code outputs.webhook}: where on-call messages are posted; {@code send} is {@code incidents}
 * (default: one message per change of an incident) or {@code episodes} (every alert message).
 */
public record WebhookSpec(String url, Duration timeout, int attempts, WebhookSink.Carries send) {
}
