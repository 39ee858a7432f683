package org.oddswatch.ingest.definition;

/**
 * The {@code outputs} section (live mode; replay writes files instead). Topics default to
 * {@code oddswatch-estimates}, {@code oddswatch-rejects} and {@code oddswatch-alerts}.
 *
 * @param estimatesFile optional JSON Lines file that final estimates are also appended to, or null
 * @param webhook optional webhook for alerts, or null
 */
public record OutputSpec(String estimatesTopic, String rejectsTopic, String alertsTopic, String estimatesFile,
                         WebhookSpec webhook) {
}
