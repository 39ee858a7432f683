package org.oddswatch.ingest.definition;

import org.oddswatch.alerts.privacy.SmallCellPolicy;

/**
 * The {@code outputs} section; {@code estimatesFile} and {@code webhook} are null when not given.
 * Counts from 1 to {@code withholdCountsBelow - 1}, and figures resting on them, are withheld from
 * every output of the monitor.
 */
public record OutputSpec(String estimatesTopic, String rejectsTopic, String alertsTopic, String estimatesFile,
                         WebhookSpec webhook, int withholdCountsBelow) {

    public SmallCellPolicy smallCells() {
        return new SmallCellPolicy(withholdCountsBelow);
    }
}
