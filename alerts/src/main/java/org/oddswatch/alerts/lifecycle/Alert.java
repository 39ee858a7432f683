package org.oddswatch.alerts.lifecycle;

import java.time.Instant;

/**
 * One alert message: the record behind the alert JSON (docs/interfaces.md, Alert). Component names are
 * the JSON field names.
 *
 * @param id deterministic episode id: the same input always gives the same id
 * @param stream the stream (monitor, or monitor/split value)
 * @param rule rule name, e.g. {@code odds-ratio-drift}
 * @param subject what moved: a watched term (and level), or {@code calibration}
 * @param state raised, continuing or cleared
 * @param windowStart start of the window that produced this message
 * @param windowEnd exclusive end of that window
 * @param observed the observed value (odds ratio, O/E, slope, CUSUM statistic, ...)
 * @param baseline the baseline value it is compared with
 * @param limit the limit crossed (or, when cleared, the limit it came back inside)
 * @param evidence z, CUSUM value, interval
 * @param events events in the window
 * @param message one paragraph an on-call person can act on, with the investigation caution
 * @param replayCommand the exact {@code oddswatch replay ...} command that reproduces it
 */
public record Alert(String id, String stream, String rule, AlertSubject subject, AlertState state, Instant windowStart,
                    Instant windowEnd, Double observed, Double baseline, Double limit, Evidence evidence, long events,
                    String message, String replayCommand) {
}
