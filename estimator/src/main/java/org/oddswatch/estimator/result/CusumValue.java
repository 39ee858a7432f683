package org.oddswatch.estimator.result;

/**
 * One CUSUM chart at the end of a final window, as the CUSUM rule reports it there.
 *
 * <p>The last two fields are the chart's state beyond its value, so a restarted service can continue
 * the chart from this window's end exactly as an uninterrupted run would (the chart's next values,
 * signals and messages depend on them). Counts among them follow the small-cell rule: a count from 1
 * to 4 is left out (null), and such an entry cannot be continued from.
 *
 * @param rule the chart's rule ({@code bernoulli-cusum-up} or {@code bernoulli-cusum-down})
 * @param value the statistic {@code S} after the events before the window's end (after a restart at
 *     0 when the chart signalled)
 * @param max the largest value {@code S} took since the previous final window's end: the value
 *     there, and the value after each event since, before any restart at 0; so {@code max >= value}
 *     and {@code max > limit} exactly when the chart signalled in between
 * @param limit the decision limit {@code h}
 * @param zone how the CUSUM rule read the chart for this window: {@code beyond} (it signalled since
 *     the previous final window), {@code inside} (below the clear limit), {@code between}, or
 *     {@code unknown} (no event since, or too few events in all)
 * @param events the events the chart has taken in all, or null when withheld
 * @param excursion the run of events since the chart last stood at 0, or null when {@code value} is 0
 */
public record CusumValue(String rule, ChartSubject subject, double value, double max, double limit, String zone,
                         Long events, Excursion excursion) {

    /**
     * The events since a chart last stood at 0 (they make up its value).
     *
     * @param start the start of the bucket holding the run's first event (never an event's own time)
     * @param events the run's events, or null when withheld
     * @param positives its positives, or null when withheld (they or the negatives are small counts)
     * @param expected the positives the baseline model expects among them, {@code sum p}
     */
    public record Excursion(java.time.Instant start, Long events, Long positives, double expected) {
    }

    /** Whether the chart can be continued from this entry: nothing withheld that its state needs. */
    public boolean complete() {
        return events != null && zone != null && (value == 0.0
                || (excursion != null && excursion.events() != null && excursion.positives() != null));
    }
}
