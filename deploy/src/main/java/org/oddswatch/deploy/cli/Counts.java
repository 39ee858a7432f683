package org.oddswatch.deploy.cli;

import java.util.Map;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/** Record counts as one phrase: {@code 950 accepted, 30 rejected (bad-time 10, ...), 12 late, 8 duplicate}. */
final class Counts {

    private Counts() {
    }

    static String outcomes(OutcomeCounts.Snapshot counts) {
        StringBuilder b = new StringBuilder();
        for (Map.Entry<String, Long> e : counts.outcomes().entrySet()) {
            b.append(b.length() == 0 ? "" : ", ").append(e.getValue()).append(' ').append(e.getKey());
        }
        if (!counts.reasons().isEmpty()) {
            b.append(" (");
            boolean first = true;
            for (Map.Entry<String, Long> e : counts.reasons().entrySet()) {
                b.append(first ? "" : ", ").append(e.getKey()).append(' ').append(e.getValue());
                first = false;
            }
            b.append(')');
        }
        return b.toString();
    }
}
