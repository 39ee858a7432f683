package org.oddswatch.ingest.definition;

import java.time.Duration;

/** {@code outputs.webhook}: where alerts are posted (defaults: timeout PT5S, 4 attempts). */
public record WebhookSpec(String url, Duration timeout, int attempts) {
}
