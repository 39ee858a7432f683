package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.List;
import java.util.Locale;

/**
 * The paragraph of an incident message: what changed in the incident, which streams and windows it
 * spans, each episode's rule, subject and latest figure against its limit, how to reproduce it, and
 * the investigation caution.
 */
final class IncidentText {

    private IncidentText() {
    }

    static String compose(String id, IncidentChange change, List<String> streams, Instant from, Instant to,
                          List<IncidentEvidence> evidence, String reason, String replayCommand) {
        long open = evidence.stream().filter(IncidentEvidence::open).count();
        StringBuilder b = new StringBuilder();
        b.append("Incident ").append(id).append(' ').append(change).append(" (").append(reason).append("): ")
                .append(evidence.size()).append(evidence.size() == 1 ? " episode" : " agreeing episodes")
                .append(", ").append(open).append(" open, on ").append(String.join(", ", streams))
                .append(", windows from ").append(from).append(" to ").append(to).append(" (end exclusive).");
        for (IncidentEvidence e : evidence) {
            b.append(' ').append(e.rule()).append(" (").append(e.subject()).append(") on ").append(e.stream())
                    .append(", ").append(e.state());
            if (e.measure() != null && e.withheld() != null) {
                b.append(": ").append(e.measure()).append(" withheld for small numbers (")
                        .append(e.withheld().get(0).reason()).append(')');
            } else if (e.measure() != null && e.value() != null) {
                b.append(": ").append(e.measure()).append(' ').append(String.format(Locale.ROOT, "%.4g", e.value()));
                if (e.limit() != null && e.direction() != null) {
                    b.append(' ').append(e.direction()).append(' ')
                            .append(String.format(Locale.ROOT, "%.4g", e.limit()));
                }
            }
            b.append(" until ").append(e.windowEnd()).append('.');
        }
        if (change == IncidentChange.RESOLVED) {
            b.append(" Every episode has ended; the incident is closed.");
        }
        b.append(" The episodes' own messages stay on the alerts topic. Reproduce with: ").append(replayCommand)
                .append(". ").append(AlertText.CAUTION);
        return b.toString();
    }
}
