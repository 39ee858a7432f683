package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.function.DoubleUnaryOperator;
import org.junit.jupiter.api.Test;

/**
 * {@link CusumRunLength#largerLimit} gives exactly (to the last bit) the larger of the two limits
 * {@link CusumRunLength#smallestLimit} solves for, whichever of the two is the larger, for the
 * budget's two pairs: the step-score CUSUM's limit at an in-control shift against its limit on
 * average over the baseline's error, and the Bernoulli CUSUM's up and down charts.
 */
class LargerLimitTest {

    private static final int GRID = 60;

    private static void assertSameAsBothSearches(DoubleUnaryOperator a, DoubleUnaryOperator b, double target,
                                                 double start, double tolerance) {
        // Source: the definition, max of the two full searches (each bracketed and bisected on its own)
        double expected = Math.max(CusumRunLength.smallestLimit(a, target, start, tolerance),
                CusumRunLength.smallestLimit(b, target, start, tolerance));
        assertEquals(expected, CusumRunLength.largerLimit(a, b, target, start, tolerance), 0.0);
        assertEquals(expected, CusumRunLength.largerLimit(b, a, target, start, tolerance), 0.0);
    }

    @Test
    void theStepScoreLimitsAtAShiftAndOnAverageOverTheError() {
        for (double[] c : new double[][] {{365, 0.5, 0.35, 0.33}, {2_000, 0.3, 0.2, 0.25}, {150, 0.8, 0.1, 0.05}}) {
            double target = c[0];
            double k = c[1];
            double shift = c[2];
            double tau = c[3];
            DoubleUnaryOperator atShift = h -> CusumRunLength.normalTwoSided(h, k, shift, GRID);
            DoubleUnaryOperator overError = h -> CusumRunLength.normalTwoSidedOverError(h, k, tau, GRID);
            assertSameAsBothSearches(atShift, overError, target, 0.5, 1e-4);
        }
    }

    @Test
    void theBernoulliUpAndDownLimits() {
        double[] share = {0.7, 0.3};
        double[] risk = {0.04, 0.09};
        for (double target : new double[] {5_000, 40_000}) {
            DoubleUnaryOperator up = h -> CusumRunLength.bernoulli(h, 2, share, risk, 1.05, 80);
            DoubleUnaryOperator down = h -> CusumRunLength.bernoulli(h, 0.5, share, risk, 1 / 1.05, 80);
            assertSameAsBothSearches(up, down, target, 1, 0.01);
        }
    }

    @Test
    void bothOrdersAreCoveredAndAnUnreachableSecondTargetStillThrows() {
        DoubleUnaryOperator slow = h -> Math.exp(h);
        DoubleUnaryOperator fast = h -> Math.exp(2 * h);
        // slow needs the larger limit: the second search runs; fast first or second gives the same
        assertNotEquals(CusumRunLength.smallestLimit(slow, 1_000, 0.5, 1e-4),
                CusumRunLength.smallestLimit(fast, 1_000, 0.5, 1e-4));
        assertSameAsBothSearches(slow, fast, 1_000, 0.5, 1e-4);
        assertThrows(IllegalArgumentException.class,
                () -> CusumRunLength.largerLimit(fast, h -> Math.min(h, 100), 1_000, 0.5, 1e-4));
    }
}
