package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.List;
import org.oddswatch.alerts.rules.Measurement;

/**
 * One alert message: the record behind the alert JSON (docs/interfaces.md, Alert). Component names are
 * the JSON field names, in this order; null fields are left out.
 *
 * @param id deterministic episode id: the same input always gives the same id
 * @param stream the stream (monitor, or monitor/split value)
 * @param rule rule name, e.g. {@code odds-ratio-drift}
 * @param subject what moved: a watched term (and level), or {@code calibration}
 * @param state raised, continuing or cleared
 * @param windowStart start of the window that produced this message
 * @param windowEnd exclusive end of that window (for every rule, the end of a final window)
 * @param measure the name of the figure compared with {@code limit}, e.g. {@code odds-ratio-z},
 *     {@code observed-expected-ratio}, {@code calibration-slope}, {@code hosmer-lemeshow-p},
 *     {@code odds-ratio}, {@code cusum-log-likelihood-ratio} (see {@link Measurement})
 * @param value that figure's value
 * @param direction where {@code value} lies: {@code above} or {@code below} the raise limit (raised,
 *     continuing), {@code within} the clear limit (cleared)
 * @param observed the observed value of the rule's main figure (the odds ratio for both odds-ratio
 *     rules; otherwise equal to {@code value})
 * @param baseline the baseline value {@code observed} is compared with (absent for bounds, the
 *     Hosmer–Lemeshow p-value and the CUSUM)
 * @param limit the raise limit (raised, continuing), or the clear limit it came back inside
 *     (cleared); for the drift z it holds either way: {@code direction} says which side
 * @param clearLimit the clear limit of the rule (hysteresis: clearing needs the value back inside it)
 * @param evidence z, CUSUM value, interval
 * @param events events in the window
 * @param message one paragraph an on-call person can act on, with the investigation caution
 * @param replayCommand the exact {@code oddswatch replay ...} command that reproduces it
 * @param withheld the figures left out under the small-cell rule, each with its reason (null when
 *     none is: the alert is then written exactly as before the list existed); a small {@code events}
 *     is added to it where the alert is published ({@code privacy.PublishedAlert})
 */
public record Alert(String id, String stream, String rule, AlertSubject subject, AlertState state, Instant windowStart,
                    Instant windowEnd, String measure, Double value, Measurement.Side direction, Double observed,
                    Double baseline, Double limit, Double clearLimit, Evidence evidence, long events, String message,
                    String replayCommand, List<WithheldFigure> withheld) {

    public Alert {
        withheld = withheld == null || withheld.isEmpty() ? null : List.copyOf(withheld);
    }

    /** An alert with nothing withheld. */
    public Alert(String id, String stream, String rule, AlertSubject subject, AlertState state, Instant windowStart,
                 Instant windowEnd, String measure, Double value, Measurement.Side direction, Double observed,
                 Double baseline, Double limit, Double clearLimit, Evidence evidence, long events, String message,
                 String replayCommand) {
        this(id, stream, rule, subject, state, windowStart, windowEnd, measure, value, direction, observed, baseline,
                limit, clearLimit, evidence, events, message, replayCommand, null);
    }
}
