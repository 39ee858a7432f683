package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.List;
import org.oddswatch.alerts.rules.Measurement;

/**
 * One episode behind an incident, as its latest alert message left it. Counts are not copied (the
 * alert's {@code events} may be a small cell); the episode's messages on the alerts topic hold them
 * under the small-cell rule.
 *
 * @param episode the episode's id (the {@code id} of its alert messages)
 * @param stream the stream it was raised on
 * @param rule the rule that raised it
 * @param subject the watched term and level, or {@code calibration}
 * @param state the state of its latest message
 * @param windowStart start of the latest message's window
 * @param windowEnd exclusive end of that window
 * @param measure the figure compared with {@code limit}
 * @param value its value in the latest message
 * @param direction the side of the limit the value lies on
 * @param limit the limit the value was compared with
 * @param withheld when the latest message withheld its value under the small-cell rule, that entry of
 *     its {@code withheld} list ({@code value} and the reason); null otherwise
 */
public record IncidentEvidence(String episode, String stream, String rule, String subject, AlertState state,
                               Instant windowStart, Instant windowEnd, String measure, Double value,
                               Measurement.Side direction, Double limit, List<WithheldFigure> withheld) {

    public IncidentEvidence {
        withheld = withheld == null || withheld.isEmpty() ? null : List.copyOf(withheld);
    }

    /** The evidence an alert message gives: its value, or the value's entry of its {@code withheld} list. */
    public static IncidentEvidence of(Alert alert) {
        List<WithheldFigure> withheld = alert.withheld() == null ? null
                : alert.withheld().stream().filter(w -> "value".equals(w.field())).toList();
        return new IncidentEvidence(alert.id(), alert.stream(), alert.rule(), alert.subject().label(), alert.state(),
                alert.windowStart(), alert.windowEnd(), alert.measure(), alert.value(), alert.direction(),
                alert.limit(), withheld);
    }

    /** True while the episode has not been cleared. */
    public boolean open() {
        return state != AlertState.CLEARED;
    }
}
