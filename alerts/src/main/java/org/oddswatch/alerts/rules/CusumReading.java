package org.oddswatch.alerts.rules;

import org.oddswatch.alerts.lifecycle.AlertSubject;

/** The current value of one CUSUM chart, for meters and status pages. */
public record CusumReading(String rule, AlertSubject subject, double value, double limit, long events) {
}
