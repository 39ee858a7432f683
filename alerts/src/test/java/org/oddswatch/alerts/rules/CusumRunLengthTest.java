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
}
