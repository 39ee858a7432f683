package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Supplier;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * Fits that a convergence test demanding a score below an absolute threshold, or a log-likelihood
 * change visible in the summed objective, could not finish: ten million grouped trials, a million
 * single events (whose cold fit stopped after 3 iterations), prevalence 0.1 %, a raw calendar year
 * beside a raw age in days, and two columns with {@code 1 - r^2} about 1e-6; and warm starts a
 * millionth of a standard error from the maximum, where no step can improve the summed log-likelihood
 * beyond rounding. Each must converge (window fit, constrained fits for the LR test and profile bounds, Firth)
 * and agree with statsmodels.
 */
class ConvergenceReferenceTest {

    private static final String DIR = "/reference/convergence/";

    static Stream<Arguments> designs() {
        return Stream.of(
                Arguments.of("ten-million", (Supplier<FitProblem>) ConvergenceDesigns::tenMillion),
                Arguments.of("rare", (Supplier<FitProblem>) ConvergenceDesigns::rare),
                Arguments.of("uncentered", (Supplier<FitProblem>) ConvergenceDesigns::uncentered),
                Arguments.of("collinear", (Supplier<FitProblem>) ConvergenceDesigns::collinear),
                Arguments.of("million", (Supplier<FitProblem>) ConvergenceDesigns::million));
    }

    /** {coef[], se[]} of a fixture written by convergence_fixtures.py. */
    static double[][] reference(String name) {
        List<double[]> rows = new ArrayList<>();
        try (InputStream in = ConvergenceReferenceTest.class.getResourceAsStream(DIR + name + "-fit.csv")) {
            BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
            String line;
            while ((line = reader.readLine()) != null) {
                if (line.startsWith("#") || line.startsWith("column,")) {
                    continue;
                }
                String[] parts = line.split(",");
                rows.add(new double[] {Double.parseDouble(parts[1]), Double.parseDouble(parts[2])});
            }
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        double[][] out = new double[2][rows.size()];
        for (int j = 0; j < rows.size(); j++) {
            out[0][j] = rows.get(j)[0];
            out[1][j] = rows.get(j)[1];
        }
        return out;
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("designs")
    void windowFitConvergesAndAgreesWithStatsmodels(String name, Supplier<FitProblem> design) {
        FitProblem problem = design.get();
        double[][] expected = reference(name);
        ModelFit cold = ModelFitter.fit(problem, null, FitControl.defaults());
        assertEquals(FitState.CONVERGED, cold.state(), name + ": " + cold.fit().stopDescription());
        assertMatches(name, expected, cold.fit());
        // From a previous solution: a refit of the same rows, a constrained fit started at the maximum, or the
        // previous window's estimates. Each must converge from there, not by the cold restart.
        for (double away : new double[] {1e-6, 1e-2, 0.1}) {
            double[] warm = expected[0].clone();
            for (int j = 0; j < warm.length; j++) {
                warm[j] += (j % 2 == 0 ? away : -away) * expected[1][j];
            }
            ModelFit fromWarm = ModelFitter.fit(problem, warm, FitControl.defaults());
            assertEquals(FitState.CONVERGED, fromWarm.state(), name + ": " + fromWarm.fit().stopDescription());
            assertTrue(fromWarm.fit().warmStartUsed(), name + " from " + away + " standard errors away: "
                    + fromWarm.fit().stopDescription());
            assertMatches(name, expected, fromWarm.fit());
        }
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("designs")
    void constrainedFitsConverge(String name, Supplier<FitProblem> design) {
        FitProblem problem = design.get();
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        int last = problem.columns() - 1;
        LikelihoodRatioTest lr = LikelihoodRatioTest.of(problem, fit, new int[] {last}, FitControl.defaults());
        assertTrue(lr.converged(), name);
        // Near the maximum the profile is quadratic: chi2 close to the Wald statistic (z^2).
        double z = fit.coefficients()[last] / fit.standardError(last);
        assertEquals(z * z, lr.chiSquare(), 0.05 * z * z + 0.05, name);
        double[] bounds = ProfileLikelihood.interval(problem, fit, last, 0.95, FitControl.defaults());
        assertTrue(Double.isFinite(bounds[0]) && Double.isFinite(bounds[1]), name);
        double se = fit.standardError(last);
        assertEquals(fit.coefficients()[last] - 1.96 * se, bounds[0], 0.1 * se, name);
        assertEquals(fit.coefficients()[last] + 1.96 * se, bounds[1], 0.1 * se, name);
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("designs")
    void firthFitConvergesNextToTheMaximumLikelihoodFit(String name, Supplier<FitProblem> design) {
        FitProblem problem = design.get();
        double[][] expected = reference(name);
        FitResult firth = FirthFitter.fit(problem, null, FitControl.defaults());
        assertTrue(firth.converged(), name + ": " + firth.stopDescription());
        // Source: statsmodels 0.13.5 GLM(Binomial) estimates and SEs in reference/convergence/<name>-fit.csv.
        // Firth's correction is O(1/n), so with thousands of events it is a small fraction of a standard error.
        for (int j = 0; j < expected[0].length; j++) {
            assertEquals(expected[0][j], firth.coefficients()[j], 0.2 * expected[1][j], name + " coefficient " + j);
        }
    }

    @org.junit.jupiter.api.Test
    void messagesStateTheRealReasonAndIterationCount() {
        FitProblem problem = ConvergenceDesigns.uncentered();
        FitResult capped = NewtonFitter.fit(problem, null, FitControl.defaults().withMaxIterations(2));
        assertEquals(false, capped.converged());
        assertEquals(2, capped.iterations());
        assertTrue(capped.stopDescription().startsWith("stopped after 2 iterations: the iteration cap was reached "
                + "with the Newton decrement at "), capped.stopDescription());
        FitResult done = NewtonFitter.fit(problem, null, FitControl.defaults());
        assertTrue(done.stopDescription().startsWith("converged after " + done.iterations() + " iterations"),
                done.stopDescription());
    }

    private static void assertMatches(String name, double[][] expected, FitResult fit) {
        for (int j = 0; j < expected[0].length; j++) {
            // Source: statsmodels GLM(Binomial) on the same rows, src/test/resources/reference/convergence/<name>-fit.csv.
            assertEquals(expected[0][j], fit.coefficients()[j], 1e-6 * expected[1][j], name + " coefficient " + j);
            assertEquals(expected[1][j], fit.standardError(j), 1e-6 * expected[1][j], name + " SE " + j);
        }
    }
}
