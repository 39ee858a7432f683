package org.oddswatch.estimator.fit;

/**
 * An invertible linear recoding of a design's columns that puts every column on the scale of a unit
 * indicator, for the separation programme: with a constant column k (the intercept) every other column
 * becomes {@code (x_j - m_j) / s_j}, {@code m_j} the midpoint and {@code s_j} the half-range of its
 * values, so it spans exactly [-1, 1]; the constant column becomes 1. Without a constant column each
 * column is divided by its largest absolute value. Only rows with trials count.
 *
 * <p>Separation is a property of the column space ({@code x_i . b} for all b), so it is unchanged by the
 * recoding; what changes is the numerics: a calendar year such as 2026 + month/12 is nearly a multiple
 * of the intercept, and an age in days is 10^4 times larger than an indicator, so in raw units a linear
 * programme with relative tolerances (Commons Math's simplex compares to 1e-6) cannot tell a small
 * separating component from rounding. A direction {@code b'} in the recoded columns is the raw direction
 * {@code b = T b'}: {@code b_j = b'_j / s_j} for {@code j != k} and
 * {@code b_k = (b'_k - sum_j m_j b'_j / s_j) / c_k} ({@code c_k} the constant's value).
 */
final class ColumnStandardization {

    private final int p;
    /** Index of the constant column, or -1. */
    private final int constant;
    private final double constantValue;
    private final double[] centre;
    private final double[] scale;

    private ColumnStandardization(int p, int constant, double constantValue, double[] centre, double[] scale) {
        this.p = p;
        this.constant = constant;
        this.constantValue = constantValue;
        this.centre = centre;
        this.scale = scale;
    }

    static ColumnStandardization of(FitProblem problem) {
        int p = problem.columns();
        double[] min = new double[p];
        double[] max = new double[p];
        java.util.Arrays.fill(min, Double.POSITIVE_INFINITY);
        java.util.Arrays.fill(max, Double.NEGATIVE_INFINITY);
        double[] x = problem.x();
        for (int i = 0; i < problem.rows(); i++) {
            if (problem.trials()[i] == 0) {
                continue;
            }
            for (int j = 0; j < p; j++) {
                double v = x[i * p + j];
                min[j] = Math.min(min[j], v);
                max[j] = Math.max(max[j], v);
            }
        }
        int constant = -1;
        for (int j = 0; j < p && constant < 0; j++) {
            if (min[j] == max[j] && min[j] != 0) {
                constant = j;
            }
        }
        double[] centre = new double[p];
        double[] scale = new double[p];
        for (int j = 0; j < p; j++) {
            double largest = Math.max(Math.abs(min[j]), Math.abs(max[j]));
            if (j == constant || !(largest > 0) || constant >= 0 && min[j] == max[j]) {
                scale[j] = largest > 0 ? largest : 1;
            } else if (constant >= 0) {
                centre[j] = min[j] / 2 + max[j] / 2;
                scale[j] = max[j] / 2 - min[j] / 2;
            } else {
                scale[j] = largest;
            }
        }
        return new ColumnStandardization(p, constant, constant >= 0 ? min[constant] : 1, centre, scale);
    }

    /** Row i of the design in the recoded columns, written into {@code out}. */
    void row(double[] x, int i, double[] out) {
        int base = i * p;
        for (int j = 0; j < p; j++) {
            out[j] = j == constant ? 1 : (x[base + j] - centre[j]) / scale[j];
        }
    }

    /** {@code T' v}: a sum of raw rows {@code sum_i s_i x_i} as the same sum of recoded rows. */
    double[] recodeSum(double[] v) {
        double[] out = new double[p];
        double base = constant >= 0 ? v[constant] / constantValue : 0;
        for (int j = 0; j < p; j++) {
            out[j] = j == constant ? base : (v[j] - centre[j] * base) / scale[j];
        }
        return out;
    }

    /** The raw direction {@code T b'} of a direction in the recoded columns. */
    double[] toRaw(double[] recoded) {
        double[] b = new double[p];
        double shift = 0;
        for (int j = 0; j < p; j++) {
            if (j != constant) {
                b[j] = recoded[j] / scale[j];
                shift += centre[j] * b[j];
            }
        }
        if (constant >= 0) {
            b[constant] = (recoded[constant] - shift) / constantValue;
        }
        return b;
    }

    /**
     * The columns a recoded direction moves: {@code |b'_j| > threshold} for an ordinary column; the
     * constant column when its raw component is above {@code threshold} relative to the terms it sums.
     */
    int[] involved(double[] recoded, double threshold) {
        boolean[] in = new boolean[p];
        int count = 0;
        double shift = 0;
        double size = constant >= 0 ? Math.abs(recoded[constant]) : 0;
        for (int j = 0; j < p; j++) {
            if (j != constant) {
                in[j] = Math.abs(recoded[j]) > threshold;
                shift += centre[j] * recoded[j] / scale[j];
                size += Math.abs(centre[j] * recoded[j] / scale[j]);
            }
        }
        if (constant >= 0) {
            in[constant] = Math.abs(recoded[constant] - shift) > threshold * Math.max(size, 1);
        }
        for (boolean b : in) {
            count += b ? 1 : 0;
        }
        int[] out = new int[count];
        for (int j = 0, r = 0; j < p; j++) {
            if (in[j]) {
                out[r++] = j;
            }
        }
        return out;
    }

    /**
     * Whether some column lies far from zero relative to its spread ({@code |m_j| > 2 s_j}, beside a
     * constant column): a calendar year, not an indicator or an age from 0. Only then does the
     * information in the raw columns lose digits to cancellation ({@link #covariance}).
     */
    boolean centresMatter() {
        if (constant < 0) {
            return false;
        }
        for (int j = 0; j < p; j++) {
            if (j != constant && Math.abs(centre[j]) > 2 * scale[j]) {
                return true;
            }
        }
        return false;
    }

    /**
     * The inverse information at {@code beta}, {@code T (X'_r W X_r)^-1 T'}, with the information summed
     * over the recoded rows {@code x'_i} and mapped back by the recoding's matrix T (column j of T is
     * {@link #toRaw} of the j-th unit vector). Equal to {@code (X'WX)^-1} in exact arithmetic; in
     * floating point the raw sum of a column such as 2026 + month/12 carries its rounding at the size of
     * 2026^2, and the inverse amplifies that by the near-collinearity with the intercept (1e-6 relative
     * in the standard errors of designs with uncentred years and a near copy of them), while the
     * recoded sum carries it at the size of the spread. Null when not positive definite.
     */
    double[][] covariance(FitProblem problem, double[] beta) {
        int n = problem.rows();
        double[] x = problem.x();
        double[] offset = problem.offset();
        double[] info = new double[p * p];
        double[] row = new double[p];
        for (int i = 0; i < n; i++) {
            double trials = problem.trials()[i];
            if (trials == 0) {
                continue;
            }
            double eta = offset == null ? 0 : offset[i];
            for (int j = 0; j < p; j++) {
                eta += x[i * p + j] * beta[j];
            }
            double e = Math.exp(-Math.abs(eta));
            double w = trials * e / ((1 + e) * (1 + e));
            row(x, i, row);
            for (int j = 0; j < p; j++) {
                double wj = w * row[j];
                for (int k = 0; k <= j; k++) {
                    info[j * p + k] += wj * row[k];
                }
            }
        }
        double[][] recoded = new double[p][p];
        for (int j = 0; j < p; j++) {
            for (int k = 0; k <= j; k++) {
                recoded[j][k] = info[j * p + k];
                recoded[k][j] = info[j * p + k];
            }
        }
        double[][] inverse = NewtonEngine.inverse(recoded);
        if (inverse == null) {
            return null;
        }
        double[][] t = new double[p][];
        for (int j = 0; j < p; j++) {
            double[] unit = new double[p];
            unit[j] = 1;
            t[j] = toRaw(unit);
        }
        // cov_ab = sum_jk T_aj C_jk T_bk, with T_aj = t[j][a].
        double[][] cov = new double[p][p];
        for (int a = 0; a < p; a++) {
            double[] tc = new double[p];
            for (int k = 0; k < p; k++) {
                double sum = 0;
                for (int j = 0; j < p; j++) {
                    sum += t[j][a] * inverse[j][k];
                }
                tc[k] = sum;
            }
            for (int b = 0; b <= a; b++) {
                double sum = 0;
                for (int k = 0; k < p; k++) {
                    sum += tc[k] * t[k][b];
                }
                cov[a][b] = sum;
                cov[b][a] = sum;
            }
        }
        return cov;
    }

    /** The whole problem in the recoded columns (for tests and small problems). */
    FitProblem apply(FitProblem problem) {
        double[] x = new double[problem.rows() * p];
        double[] row = new double[p];
        for (int i = 0; i < problem.rows(); i++) {
            row(problem.x(), i, row);
            System.arraycopy(row, 0, x, i * p, p);
        }
        return new FitProblem(problem.rows(), p, x, problem.trials(), problem.positives(), problem.offset());
    }
}
