package org.oddswatch.ingest.definition;

import org.oddswatch.alerts.privacy.SmallCellPolicy;

/**
 * The {@code outputs} section (live mode; replay writes files instead). Topics default to
 * {@code oddswatch-estimates}, {@code oddswatch-rejects} and {@code oddswatch-alerts}.
 *
 * @param estimatesFile optional JSON Lines file that final estimates are also appended to, or null
 * @param webhook optional webhook for alerts, or null
 * @param withholdCountsBelow the small-cell limit of every published output of the monitor: counts
 *     from 1 to this minus 1, and figures resting on them, are withheld (default 5, at least 2)
 */
public record OutputSpec(String estimatesTopic, String rejectsTopic, String alertsTopic, String estimatesFile,
                         WebhookSpec webhook, int withholdCountsBelow) {

    /** The small-cell rule of this monitor's published outputs. */
    public SmallCellPolicy smallCells() {
        return new SmallCellPolicy(withholdCountsBelow);
    }
}
