package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/**
 * The Markov-chain run lengths of {@link CusumRunLength} against a published table, so the chain that
 * {@link BernoulliCusumArlTest} relies on is checked on a case with known answers.
 */
class CusumRunLengthTest {

    @Test
    void markovChainReproducesThePublishedTable() {
        // Source: Montgomery, Introduction to Statistical Quality Control, tabular CUSUM ARL table, k = 0.5
        // (from memory; see docs/references.md); method: Brook & Evans 1972. Table values are rounded.
        assertEquals(168, CusumRunLength.normalTwoSided(4, 0.5, 0, 400), 168 * 0.01);
        assertEquals(8.38, CusumRunLength.normalTwoSided(4, 0.5, 1, 400), 0.05);
        assertEquals(465, CusumRunLength.normalTwoSided(5, 0.5, 0, 400), 465 * 0.01);
        assertEquals(10.4, CusumRunLength.normalTwoSided(5, 0.5, 1, 400), 0.06);
    }

    @Test
    void theBudgetGridAgreesWithTheFineChain() {
        for (double h : new double[] {2, 4, 6}) {
            for (double k : new double[] {0.5, 1.5}) {
                double fine = CusumRunLength.normalTwoSided(h, k, 0, 400);
                assertEquals(fine, CusumRunLength.normalTwoSided(h, k, 0, CusumRunLength.BUDGET_GRID), 0.005 * fine);
            }
        }
    }

    @Test
    void theSolvedLimitIsTheTableLimitForTheTableRunLength() {
        // Source: Montgomery's table as above: k = 0.5, h = 4 gives 168 (two-sided) and h = 5 gives 465
        assertEquals(4.0, CusumRunLength.normalTwoSidedLimit(168, 0.5, 0), 0.02);
        assertEquals(5.0, CusumRunLength.normalTwoSidedLimit(465, 0.5, 0), 0.02);
    }

    @Test
    void theSolvedLimitAgreesWithRsSpcPackage() {
        // Source: R 4.2.2, package spc 0.6.7 (Debian r-cran-spc): xcusum.crit(k = 1.2, L0 = 500, mu0 = 0.3,
        // sided = "two") = 2.602292, the limit at an in-control mean shifted by 0.3 (the budget's case);
        // xcusum.arl(k = 0.5, h = 3, mu = 0, sided = "two") = 58.79785
        assertEquals(2.602292, CusumRunLength.normalTwoSidedLimit(500, 1.2, 0.3), 0.01);
        assertEquals(58.79785, CusumRunLength.normalTwoSided(3, 0.5, 0, 400), 58.79785 * 0.005);
    }

    @Test
    void theSolvedLimitIsTheBoundary() {
        double h = CusumRunLength.normalTwoSidedLimit(500, 1.2, 0.3);
        assertTrue(CusumRunLength.normalTwoSided(h, 1.2, 0.3, CusumRunLength.BUDGET_GRID) >= 500);
        assertTrue(CusumRunLength.normalTwoSided(h - 0.01, 1.2, 0.3, CusumRunLength.BUDGET_GRID) < 500);
    }

    @Test
    void theRunLengthAveragedOverTheBaselinesErrorAgreesWithRsSpcPackage() {
        // Source: R 4.2.2, package spc 0.6.7: 1 / integrate(function(s) dnorm(s, 0, tau) /
        // xcusum.arl(k, h, mu = s, sided = "two"), -6 tau, 6 tau) = 536.0598 for k = 1.54, h = 1.93,
        // tau = 1/sqrt(12) (known baseline: 1152.108), and 92.2788 for k = 0.5, h = 4, tau = 0.2
        assertEquals(536.0598, CusumRunLength.normalTwoSidedOverError(1.93, 1.54, 1 / Math.sqrt(12), 400), 536 * 0.005);
        assertEquals(92.2788, CusumRunLength.normalTwoSidedOverError(4, 0.5, 0.2, 400), 92.3 * 0.005);
        assertEquals(CusumRunLength.normalTwoSided(4, 0.5, 0, 150), CusumRunLength.normalTwoSidedOverError(4, 0.5, 0, 150));
        double h = CusumRunLength.normalTwoSidedLimitOverError(1152, 1.54, 1 / Math.sqrt(12));
        assertTrue(CusumRunLength.normalTwoSidedOverError(h, 1.54, 1 / Math.sqrt(12), CusumRunLength.BUDGET_GRID) >= 1152);
        assertTrue(CusumRunLength.normalTwoSidedOverError(h - 0.01, 1.54, 1 / Math.sqrt(12), CusumRunLength.BUDGET_GRID)
                < 1152, "boundary: 0.01 lower misses the target");
    }
}
