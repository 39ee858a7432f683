package org.oddswatch.estimator.result;

import java.time.Instant;

/**
 * The odds-ratio step CUSUM of one watched coefficient at the end of a final window: both sides of
 * its two-sided chart, as the rule left them after the window's step. With these a restarted service
 * continues the chart from this window's end exactly as an uninterrupted run would.
 *
 * @param subject the watched term and level
 * @param upper the upper side's statistic {@code S+} after the step (0 after a signal, which restarts it)
 * @param lower the lower side's statistic {@code S-} after the step
 * @param upperStart the start of the first step since the upper side last stood at 0, or null when it
 *     stands at 0 (the window an alert on that side reports from)
 * @param lowerStart the same for the lower side
 * @param limit the decision limit {@code h}
 * @param zone how the rule read the chart for this window: {@code beyond} (a side signalled),
 *     {@code inside}, {@code between} or {@code unknown} (the step had too little information)
 * @param direction +1 when the upper side signalled, -1 the lower, 0 otherwise
 */
public record StepCusumValue(ChartSubject subject, double upper, double lower, Instant upperStart, Instant lowerStart,
                             double limit, String zone, int direction) {
}
