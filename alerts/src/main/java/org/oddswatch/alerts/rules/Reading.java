package org.oddswatch.alerts.rules;

import java.time.Instant;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;

/**
 * One rule's verdict on one subject for one final window (or one CUSUM signal or clearing point).
 * The lifecycle turns a run of readings into raised, continuing and cleared messages.
 *
 * @param rule rule name, e.g. {@code odds-ratio-drift}
 * @param subject what the statistic is about
 * @param zone where the statistic stands
 * @param direction +1 above, -1 below, 0 when not beyond; a run of {@link Zone#BEYOND} readings must
 *     keep one direction to count as consecutive
 * @param raiseAfter readings beyond the limit in a row needed to raise (k)
 * @param clearAfter readings inside the clear limit in a row needed to clear (m)
 * @param windowStart start of the data the reading covers
 * @param windowEnd exclusive end of that data
 * @param observed observed value (odds ratio, O/E, CUSUM statistic ...), or null
 * @param baseline the baseline value it is compared with, or null
 * @param limit the raise limit
 * @param clearLimit the clear limit (reported in cleared messages)
 * @param evidence z, CUSUM value, interval
 * @param events events the reading rests on
 * @param detail a sentence saying what moved and by how much (used in the alert message)
 * @param measurement the figure compared with {@code limit} and {@code clearLimit}: its measure's
 *     name, its value and the side of the limit it lies on
 */
public record Reading(String rule, AlertSubject subject, Zone zone, int direction, int raiseAfter, int clearAfter,
                      Instant windowStart, Instant windowEnd, Double observed, Double baseline, Double limit,
                      Double clearLimit, Evidence evidence, long events, String detail, Measurement measurement) {

    /** A key naming the rule and subject; episodes are tracked per key. */
    public String key() {
        return key(rule, subject);
    }

    public static String key(String rule, AlertSubject subject) {
        return rule + "|" + subject.label();
    }
}
