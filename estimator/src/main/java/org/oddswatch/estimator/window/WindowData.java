package org.oddswatch.estimator.window;

/**
 * The fit-ready content of one window: grouped design rows (a covariate pattern with its trials
 * and positives, or a single event with trials 1) plus the counts prevalence needs. Rows are in a
 * deterministic order that depends only on the events, never on hash iteration or timing. The
 * arrays must not be changed: the store may have handed the fitters the indicator grouping of
 * {@code x} ({@link org.oddswatch.estimator.fit.KnownGrouping}).
 *
 * @param columns design width p, including the intercept
 * @param rows number of grouped rows n
 * @param x row-major design, length n*p
 * @param trials events per row
 * @param positives positives per row
 * @param events all accepted events in the window, complete or not
 * @param cases positives among all accepted events
 * @param stratumEvents events per level of the stratifying term (empty when none is configured)
 * @param stratumCases positives per level of the stratifying term
 */
public record WindowData(int columns, int rows, double[] x, double[] trials, double[] positives, long events,
                         long cases, long[] stratumEvents, long[] stratumCases) {

    /** Complete-case events (sum of trials). */
    public long completeEvents() {
        double sum = 0;
        for (int i = 0; i < rows; i++) {
            sum += trials[i];
        }
        return Math.round(sum);
    }

    /** Complete-case positives (sum of positives). */
    public long completePositives() {
        double sum = 0;
        for (int i = 0; i < rows; i++) {
            sum += positives[i];
        }
        return Math.round(sum);
    }
}
