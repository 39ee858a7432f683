package org.oddswatch.estimator.fit;

/**
 * A grouped binomial regression problem: row {@code i} has design vector
 * {@code x[i*columns .. i*columns+columns-1]}, {@code trials[i]} events of which {@code positives[i]}
 * are positive, and an optional fixed offset added to its linear predictor
 * {@code eta_i = offset_i + x_i . beta}. Arrays are used as given (not copied): do not change them
 * while the problem is in use (the fitters keep derived data of a large problem, such as its
 * indicator grouping, for later fits of the same problem).
 *
 * @param rows number of grouped rows n
 * @param columns design width p
 * @param x row-major design, length n*p
 * @param trials events per row, each at least 0
 * @param positives positives per row, each in [0, trials]
 * @param offset offset per row, or null for none
 */
public record FitProblem(int rows, int columns, double[] x, double[] trials, double[] positives, double[] offset) {

    public FitProblem {
        if (rows < 0 || columns < 1) {
            throw new IllegalArgumentException("a fit problem needs at least one column and no negative row count");
        }
        if (x == null || x.length != (long) rows * columns) {
            throw new IllegalArgumentException("design must have rows*columns = " + (long) rows * columns + " values");
        }
        if (trials == null || trials.length != rows || positives == null || positives.length != rows) {
            throw new IllegalArgumentException("trials and positives need one value per row");
        }
        if (offset != null && offset.length != rows) {
            throw new IllegalArgumentException("offset needs one value per row");
        }
        for (int i = 0; i < rows; i++) {
            if (!(trials[i] >= 0) || !(positives[i] >= 0) || positives[i] > trials[i] || Double.isInfinite(trials[i])) {
                throw new IllegalArgumentException("row " + i + ": need 0 <= positives <= trials, finite");
            }
            if (offset != null && !Double.isFinite(offset[i])) {
                throw new IllegalArgumentException("row " + i + ": offset is not finite");
            }
        }
        // A design the window store assembled (and attached its grouping to) is finite by construction.
        if (!KnownGrouping.isAttached(x, columns, rows)) {
            for (int k = 0; k < x.length; k++) {
                if (!Double.isFinite(x[k])) {
                    throw new IllegalArgumentException("row " + k / columns + ": design value is not finite");
                }
            }
        }
    }

    /** Plain logistic problem without offset. */
    public static FitProblem of(int rows, int columns, double[] x, double[] trials, double[] positives) {
        return new FitProblem(rows, columns, x, trials, positives, null);
    }

    /** Sum of trials. */
    public double totalTrials() {
        double sum = 0;
        for (int i = 0; i < rows; i++) {
            sum += trials[i];
        }
        return sum;
    }

    /** Sum of positives. */
    public double totalPositives() {
        double sum = 0;
        for (int i = 0; i < rows; i++) {
            sum += positives[i];
        }
        return sum;
    }

    /** The problem restricted to the given columns (in that order), same rows and offset. */
    public FitProblem selectColumns(int[] keep) {
        double[] reduced = new double[rows * keep.length];
        for (int i = 0; i < rows; i++) {
            int from = i * columns;
            int to = i * keep.length;
            for (int a = 0; a < keep.length; a++) {
                reduced[to + a] = x[from + keep[a]];
            }
        }
        return new FitProblem(rows, keep.length, reduced, trials, positives, offset);
    }
}
