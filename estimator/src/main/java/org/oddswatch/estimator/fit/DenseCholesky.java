package org.oddswatch.estimator.fit;

/**
 * In-place Cholesky factorisation of small dense symmetric matrices stored row-major in a flat
 * array, for the Newton step and the Firth hat values. Only plain loops: this runs once per
 * iteration, next to the O(n p^2) cross-product.
 */
final class DenseCholesky {

    private DenseCholesky() {
    }

    /**
     * Overwrites the lower triangle of {@code a} (n x n, row-major) with L where A = L L'.
     *
     * @return false when A is not (numerically) positive definite
     */
    static boolean decompose(double[] a, int n) {
        for (int j = 0; j < n; j++) {
            double d = a[j * n + j];
            for (int k = 0; k < j; k++) {
                d -= a[j * n + k] * a[j * n + k];
            }
            if (!(d > 0) || !Double.isFinite(d)) {
                return false;
            }
            double l = Math.sqrt(d);
            a[j * n + j] = l;
            for (int i = j + 1; i < n; i++) {
                double s = a[i * n + j];
                for (int k = 0; k < j; k++) {
                    s -= a[i * n + k] * a[j * n + k];
                }
                a[i * n + j] = s / l;
            }
        }
        return true;
    }

    /** Solves L L' x = b in place, given the factor from {@link #decompose}. */
    static void solve(double[] l, int n, double[] b) {
        for (int i = 0; i < n; i++) {
            double s = b[i];
            for (int k = 0; k < i; k++) {
                s -= l[i * n + k] * b[k];
            }
            b[i] = s / l[i * n + i];
        }
        for (int i = n - 1; i >= 0; i--) {
            double s = b[i];
            for (int k = i + 1; k < n; k++) {
                s -= l[k * n + i] * b[k];
            }
            b[i] = s / l[i * n + i];
        }
    }

    /** log det A = 2 sum log L_jj. */
    static double logDeterminant(double[] l, int n) {
        double s = 0;
        for (int j = 0; j < n; j++) {
            s += Math.log(l[j * n + j]);
        }
        return 2 * s;
    }

    /** The full inverse of A (row-major n x n) from its factor. */
    static double[] inverse(double[] l, int n) {
        double[] inv = new double[n * n];
        double[] e = new double[n];
        for (int c = 0; c < n; c++) {
            java.util.Arrays.fill(e, 0);
            e[c] = 1;
            solve(l, n, e);
            for (int r = 0; r < n; r++) {
                inv[r * n + c] = e[r];
            }
        }
        return inv;
    }
}
