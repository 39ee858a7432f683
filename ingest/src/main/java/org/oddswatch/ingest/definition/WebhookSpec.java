package org.oddswatch.ingest.definition;

import java.time.Duration;

/** {@code outputs.webhook}: where alerts are posted. */
public record WebhookSpec(String url, Duration timeout, int attempts) {
}
