package org.oddswatch.alerts.report.html;

import java.time.Instant;

/**
 * One rejected or late record as the HTML report counts it: the stream it was routed to (null when
 * no monitor could read it), its reason, and its event time when that could be read from the record
 * (null otherwise: unparseable records, unreadable times, CSV rows).
 */
public record RejectMark(String stream, String reason, Instant time) {
}
