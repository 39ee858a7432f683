package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * The Markov-chain solver's row operations stop at the pivot row's last non-zero column; its
 * answer must be the plain elimination's (Gaussian elimination with partial pivoting over whole
 * rows, then back substitution: Golub &amp; Van Loan, <i>Matrix Computations</i>, 4th ed., algorithms
 * 3.4.1 and 3.1.2) to the last bit, on the banded Bernoulli chains (up and down charts, one and two
 * risk classes), on a dense chain, and on a singular one. That the plain elimination gives the right
 * run lengths is checked against published tables and R's {@code spc} in {@link CusumRunLengthTest}.
 */
class BandedSolveTest {

    /** The plain elimination: row operations over whole rows. */
    private static double plain(double[][] q) {
        return CusumRunLength.solveFromZero(q, false);
    }

    @Test
    void bernoulliChainsAreSolvedToTheLastBit() {
        double[][] shares = {{1}, {0.7, 0.3}};
        double[][] risks = {{0.05}, {0.04, 0.09}};
        for (int c = 0; c < shares.length; c++) {
            for (double r : new double[] {2, 0.5, 1.5}) {
                for (double h : new double[] {1.7, 4.3, 9.1}) {
                    double[][] q = CusumRunLength.bernoulliTransitions(h, r, shares[c], risks[c], r > 1 ? 1.05 : 0.95,
                            120);
                    double expected = plain(q);
                    assertTrue(expected > 1, "run length " + expected);
                    assertEquals(expected, CusumRunLength.solveFromZero(q), 0.0, "r " + r + ", h " + h);
                }
            }
        }
    }

    @Test
    void denseAndSingularChainsToo() {
        int n = 40;
        double[][] dense = new double[n][n];
        double[][] singular = new double[n][n];
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < n; j++) {
                dense[i][j] = 0.9 / n * (1 + 0.5 * Math.sin(i + 2.0 * j));
            }
            singular[i][Math.min(i + 1, n - 1)] = 1; // the last state never leaves: I - Q is singular
        }
        assertEquals(plain(dense), CusumRunLength.solveFromZero(dense), 0.0);
        double expected = plain(singular);
        assertTrue(!Double.isFinite(expected), "singular: " + expected);
        assertEquals(expected, CusumRunLength.solveFromZero(singular), 0.0);
    }
}
