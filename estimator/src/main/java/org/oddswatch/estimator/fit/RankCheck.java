package org.oddswatch.estimator.fit;

/**
 * Finds aliased design columns: columns that are (numerically) a linear combination of earlier
 * columns over the rows that carry events. It runs a left-to-right Cholesky factorisation of the
 * trials-weighted cross-product {@code C = X' diag(n) X}; column j is aliased when its residual
 * {@code C_jj - sum_k L_jk^2} (over kept k < j) is at most {@code 1e-10 C_jj}, or when {@code C_jj = 0}
 * (an empty level). As in R's {@code glm}, the later of two collinear columns is the one dropped,
 * so declaration order decides.
 */
public final class RankCheck {

    /** Relative residual (squared-norm scale) below which a column counts as aliased. */
    public static final double TOLERANCE = 1e-10;

    private RankCheck() {
    }

    /** Indices of aliased columns, ascending; empty when the design has full column rank. */
    public static int[] aliased(FitProblem problem) {
        return aliased(problem, IndicatorGroups.of(problem));
    }

    /** As {@link #aliased(FitProblem)}, the cross-product summed per indicator group when given. */
    static int[] aliased(FitProblem problem, IndicatorGroups groups) {
        return aliased(problem.columns(), groups == null ? crossProduct(problem) : groups.weightedCrossProduct(problem));
    }

    private static double[] crossProduct(FitProblem problem) {
        int p = problem.columns();
        int n = problem.rows();
        double[] x = problem.x();
        double[] t = problem.trials();
        double[] c = new double[p * p];
        for (int i = 0; i < n; i++) {
            if (t[i] == 0) {
                continue;
            }
            int base = i * p;
            for (int j = 0; j < p; j++) {
                double v = x[base + j];
                if (v == 0) {
                    continue;
                }
                double tv = t[i] * v;
                for (int k = j; k < p; k++) {
                    c[j * p + k] += tv * x[base + k];
                }
            }
        }
        return c;
    }

    private static int[] aliased(int p, double[] c) {
        double[] l = new double[p * p];
        boolean[] kept = new boolean[p];
        int dropped = 0;
        for (int j = 0; j < p; j++) {
            double d = c[j * p + j];
            for (int k = 0; k < j; k++) {
                if (kept[k]) {
                    d -= l[j * p + k] * l[j * p + k];
                }
            }
            if (!(c[j * p + j] > 0) || !(d > TOLERANCE * c[j * p + j])) {
                dropped++;
                continue;
            }
            kept[j] = true;
            double ljj = Math.sqrt(d);
            l[j * p + j] = ljj;
            for (int i = j + 1; i < p; i++) {
                double s = c[j * p + i];
                for (int k = 0; k < j; k++) {
                    if (kept[k]) {
                        s -= l[i * p + k] * l[j * p + k];
                    }
                }
                l[i * p + j] = s / ljj;
            }
        }
        int[] out = new int[dropped];
        for (int j = 0, r = 0; j < p; j++) {
            if (!kept[j]) {
                out[r++] = j;
            }
        }
        return out;
    }

    /** The complement of {@code dropped} in {@code 0..p-1}, ascending. */
    static int[] kept(int p, int[] dropped) {
        int[] keep = new int[p - dropped.length];
        for (int j = 0, r = 0, d = 0; j < p; j++) {
            if (d < dropped.length && dropped[d] == j) {
                d++;
            } else {
                keep[r++] = j;
            }
        }
        return keep;
    }
}
