package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** Properties on seeded random designs (mixed indicator and numeric columns, grouped trials). */
class FitPropertiesTest {

    static FitProblem randomProblem(long seed) {
        SplittableRandom random = new SplittableRandom(seed);
        int p = 2 + random.nextInt(6);
        int n = 40 + random.nextInt(400);
        double[] beta = new double[p];
        for (int j = 0; j < p; j++) {
            beta[j] = random.nextDouble(-1.5, 1.5);
        }
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        for (int i = 0; i < n; i++) {
            x[i * p] = 1;
            double eta = beta[0];
            for (int j = 1; j < p; j++) {
                double v = j % 2 == 0 ? (random.nextBoolean() ? 1 : 0) : random.nextGaussian() * 2 + 1;
                x[i * p + j] = v;
                eta += v * beta[j];
            }
            trials[i] = 1 + random.nextInt(seed % 2 == 0 ? 1 : 20);
            double mu = 1 / (1 + Math.exp(-eta));
            for (int k = 0; k < trials[i]; k++) {
                positives[i] += random.nextDouble() < mu ? 1 : 0;
            }
        }
        return FitProblem.of(n, p, x, trials, positives);
    }

    /** The score X'(y - n mu) computed here from its definition. */
    static double[] score(FitProblem problem, double[] beta) {
        int p = problem.columns();
        double[] u = new double[p];
        for (int i = 0; i < problem.rows(); i++) {
            double eta = 0;
            for (int j = 0; j < p; j++) {
                eta += problem.x()[i * p + j] * beta[j];
            }
            double r = problem.positives()[i] - problem.trials()[i] / (1 + Math.exp(-eta));
            for (int j = 0; j < p; j++) {
                u[j] += problem.x()[i * p + j] * r;
            }
        }
        return u;
    }

    static void assertNonDecreasing(double[] trace) {
        for (int k = 1; k < trace.length; k++) {
            // A full Newton step whose predicted gain is below the objective's rounding may lower it by rounding.
            double rounding = 1e-12 * (Math.abs(trace[k - 1]) + 1);
            assertTrue(trace[k] >= trace[k - 1] - rounding, "objective decreased at iteration " + k);
        }
    }

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16})
    void scoreVanishesAtTheSolutionAndTheLikelihoodNeverDecreases(long seed) {
        FitProblem problem = randomProblem(seed);
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        if (!fit.converged()) {
            // A random draw can be separated; then the maximum does not exist and there is nothing to check.
            assertTrue(SeparationCheck.check(problem).verdict() != SeparationCheck.Verdict.NONE, "seed " + seed);
            return;
        }
        double[] u = score(problem, fit.coefficients());
        for (int j = 0; j < u.length; j++) {
            // Source: first-order condition of the maximum likelihood estimate (common practice, no source)
            assertEquals(0, u[j], 1e-8 * problem.totalTrials(), "score " + j);
        }
        assertNonDecreasing(fit.trace());
        assertEquals(fit.iterations() + 1, fit.trace().length);
    }

    @ParameterizedTest
    @ValueSource(longs = {21, 22, 23, 24})
    void theResultDoesNotDependOnTheStart(long seed) {
        FitProblem problem = randomProblem(seed);
        FitResult cold = NewtonFitter.fit(problem, null, FitControl.defaults());
        double[] far = cold.coefficients().clone();
        for (int j = 0; j < far.length; j++) {
            far[j] += 0.3 * (j % 2 == 0 ? 1 : -1);
        }
        FitResult warm = NewtonFitter.fit(problem, far, FitControl.defaults());
        assertArrayEquals(cold.coefficients(), warm.coefficients(), 1e-12);
    }

    @ParameterizedTest
    @ValueSource(longs = {31, 32, 33})
    void aHopelessWarmStartFallsBackToACold(long seed) {
        FitProblem problem = randomProblem(seed);
        double[] wild = new double[problem.columns()];
        java.util.Arrays.fill(wild, 40);
        FitResult fit = NewtonFitter.fit(problem, wild, FitControl.defaults().withMaxIterations(3));
        FitResult cold = NewtonFitter.fit(problem, null, FitControl.defaults());
        assertTrue(fit.converged() == cold.converged() || !fit.warmStartUsed());
        FitResult retried = NewtonFitter.fit(problem, wild, FitControl.defaults());
        assertArrayEquals(cold.coefficients(), retried.coefficients(), 1e-9);
    }

    @ParameterizedTest
    @ValueSource(longs = {41, 42, 43})
    void firthScoreVanishesAndItsPenalizedLikelihoodNeverDecreases(long seed) {
        FitProblem problem = randomProblem(seed);
        FitResult fit = FirthFitter.fit(problem, null, FitControl.defaults());
        assertTrue(fit.converged());
        assertNonDecreasing(fit.trace());
        // The Newton decrement bounds every scaled score: lambda^2 >= U_j^2 / I_jj (Cauchy-Schwarz).
        assertTrue(fit.maxAbsScore() < 1e-6);
        FitResult ml = NewtonFitter.fit(problem, null, FitControl.defaults());
        // Firth shrinks towards 0: the penalized estimate has a smaller or equal log-likelihood.
        assertTrue(fit.logLikelihood() <= ml.logLikelihood() + 1e-9);
    }
}
