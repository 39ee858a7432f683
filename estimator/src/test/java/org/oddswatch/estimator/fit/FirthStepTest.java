package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The step length of penalized fits: no trial step moves a linear predictor by more than
 * {@link NewtonEngine#MAX_PENALIZED_ETA_STEP}, and a Firth fit from a diverged maximum-likelihood iterate
 * reaches the same estimate as one from the cold start.
 */
class FirthStepTest {

    /** {@code max_i |x_i . d|} over rows with trials, from the dense design (independent of the grouping). */
    private static double largestChange(FitProblem problem, double[] d) {
        int p = problem.columns();
        double max = 0;
        for (int i = 0; i < problem.rows(); i++) {
            if (problem.trials()[i] == 0) {
                continue;
            }
            double change = 0;
            for (int j = 0; j < p; j++) {
                change += problem.x()[i * p + j] * d[j];
            }
            max = Math.max(max, Math.abs(change));
        }
        return max;
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6, 7, 8})
    void theCappedStepMovesNoLinearPredictorBeyondTheCapAndIsNotShorterThanNeeded(long seed) {
        FitProblem problem = FitPropertiesTest.randomProblem(seed);
        SplittableRandom random = new SplittableRandom(seed + 100);
        double cap = NewtonEngine.MAX_PENALIZED_ETA_STEP;
        for (IndicatorGroups groups : new IndicatorGroups[] {IndicatorGroups.derive(problem), null}) {
            for (double scale : new double[] {0.01, 0.3, 1, 3, 30, 1000}) {
                double[] d = new double[problem.columns()];
                for (int j = 0; j < d.length; j++) {
                    d[j] = random.nextGaussian() * scale;
                }
                double t = NewtonEngine.cappedStepLength(problem, groups, d);
                double full = largestChange(problem, d);
                // Source: the definition of the cap, max_i |x_i . (t d)| <= cap with t = min(1, cap / max_i |x_i . d|).
                if (full <= cap) {
                    assertEquals(1.0, t, "a step within the cap is taken whole");
                } else {
                    assertEquals(cap, t * full, 1e-9 * cap, "a longer step is shortened to the cap exactly");
                }
            }
        }
    }

    @ParameterizedTest
    @ValueSource(longs = {11, 12, 13, 14})
    void firthFromADivergedStartReachesTheColdStartsEstimate(long seed) {
        FitProblem base = FitPropertiesTest.randomProblem(seed);
        int p = base.columns();
        // Quasi-complete separation: no positive where the 0/1 column 2 is 1 (a zero cell).
        double[] positives = base.positives().clone();
        for (int i = 0; i < base.rows(); i++) {
            if (base.x()[i * p + 2] == 1) {
                positives[i] = 0;
            }
        }
        FitProblem problem = FitProblem.of(base.rows(), p, base.x(), base.trials(), positives);
        FitResult ml = NewtonFitter.fit(problem, null, FitControl.defaults());
        assertFalse(ml.converged() && ml.maxAbsLinearPredictor() < SeparationCheck.EXTREME_ETA,
                "maximum likelihood walks off under the zero cell");
        assertTrue(ml.coefficients()[2] < -10, "the diverged iterate is far beyond the Firth estimate");
        FitControl control = ModelFitter.firthControl(FitControl.defaults());
        FitResult cold = FirthFitter.fit(problem, null, control);
        FitResult fromDiverged = FirthFitter.fit(problem, ml.coefficients(), control);
        assertTrue(cold.converged());
        assertTrue(fromDiverged.converged());
        assertTrue(fromDiverged.warmStartUsed(), "converged from the diverged start itself, not after a cold restart");
        // Property (not an outside value): a converged fit does not depend on its start (the property FitPropertiesTest checks for
        // maximum likelihood); the cold-start Firth fit is itself checked against brglm2 in GlmReferenceTest.
        // Tolerance: the decrement test puts a Firth iterate within about 1e-6 standard errors of the maximum
        // (its linearly converging step gains less from the polishing step than Newton's).
        for (int j = 0; j < p; j++) {
            assertEquals(cold.coefficients()[j], fromDiverged.coefficients()[j], 2e-6 * cold.standardError(j));
        }
        FitPropertiesTest.assertNonDecreasing(fromDiverged.trace());
    }
}
