package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.util.HashMap;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FirthFitter;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.LikelihoodRatioTest;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.fit.ProfileLikelihood;

/** Likelihood-ratio tests and profile-likelihood intervals against R (fixture individual-lrt-profile.csv). */
class ProfileAndLrReferenceTest {

    private static Map<String, double[]> sections() throws IOException {
        Map<String, double[]> values = new HashMap<>();
        try (BufferedReader r = new BufferedReader(new InputStreamReader(
                ProfileAndLrReferenceTest.class.getResourceAsStream(GlmReferenceTest.DIR + "individual-lrt-profile.csv"),
                StandardCharsets.UTF_8))) {
            String line;
            String section = "";
            while ((line = r.readLine()) != null) {
                String[] parts = line.split(",");
                if (line.startsWith("#")) {
                    continue;
                }
                if (parts[0].equals("term") || parts[0].equals("column")) {
                    section = parts[0] + ":";
                    continue;
                }
                double[] v = new double[parts.length - 1];
                for (int k = 1; k < parts.length; k++) {
                    v[k - 1] = Double.parseDouble(parts[k]);
                }
                values.put(section + parts[0], v);
            }
        }
        return values;
    }

    @Test
    void likelihoodRatioTestsMatchDrop1() throws IOException {
        Map<String, double[]> r = sections();
        FitProblem problem = GlmReferenceTest.individual();
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        // Columns: 0 intercept, 1 age/10, 2 travel=yes, 3..5 clinic
        // Source: R 4.2.2 stats::drop1(..., test = "LRT") (fixture individual-lrt-profile.csv)
        check(r.get("term:age10"), LikelihoodRatioTest.of(problem, fit, new int[] {1}, FitControl.defaults()));
        check(r.get("term:travel"), LikelihoodRatioTest.of(problem, fit, new int[] {2}, FitControl.defaults()));
        check(r.get("term:clinic"), LikelihoodRatioTest.of(problem, fit, new int[] {3, 4, 5}, FitControl.defaults()));
    }

    private static void check(double[] expected, LikelihoodRatioTest lr) {
        assertEquals(expected[0], lr.chiSquare(), 1e-7);
        assertEquals((int) expected[1], lr.df());
        assertEquals(expected[2], lr.p(), 1e-6 * expected[2]);
        assertTrue(lr.converged());
    }

    @Test
    void profileIntervalsMatchMassConfint() throws IOException {
        Map<String, double[]> r = sections();
        FitProblem problem = GlmReferenceTest.individual();
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        String[] names = {"(Intercept)", "age10", "travelyes", "clinicharbour", "clinichill", "clinicvalley"};
        for (int j = 0; j < names.length; j++) {
            double[] bounds = ProfileLikelihood.interval(problem, fit, j, 0.95, FitControl.defaults());
            // Source: MASS 7.3.58.2 confint.glm under R 4.2.2 (fixture individual-lrt-profile.csv). MASS
            // interpolates the profile with a spline, so agreement is to about 1e-4, not to our root's 1e-8.
            assertEquals(r.get("column:" + names[j])[0], bounds[0], 2e-4, names[j] + " lower");
            assertEquals(r.get("column:" + names[j])[1], bounds[1], 2e-4, names[j] + " upper");
        }
    }

    @Test
    void profileBoundsSitWhereTheDevianceRisesByTheChiSquareQuantile() {
        FitProblem problem = GlmReferenceTest.individual();
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        double[] bounds = ProfileLikelihood.interval(problem, fit, 2, 0.95, FitControl.defaults());
        // Source: definition of the profile interval (Venzon & Moolgavkar 1988); 3.841459 = chi2_1 0.95 quantile
        // (standard tables).
        for (double c : bounds) {
            assertEquals(3.841459, 2 * (fit.logLikelihood() - constrained(problem, fit, 2, c, false)), 1e-5);
        }
    }

    @Test
    void firthProfileUsesThePenalizedLikelihood() {
        FitProblem problem = GlmReferenceTest.separated();
        FitResult fit = FirthFitter.fit(problem, null, FitControl.defaults());
        assertEquals(FitMethod.FIRTH, fit.method());
        double[] bounds = ProfileLikelihood.interval(problem, fit, 1, 0.95, FitControl.defaults());
        assertTrue(Double.isFinite(bounds[0]) && Double.isFinite(bounds[1]), "finite under separation");
        assertTrue(bounds[0] < fit.coefficients()[1] && fit.coefficients()[1] < bounds[1]);
        // Source: Heinze & Schemper 2002: bounds where twice the penalized log-likelihood drops by chi2_1(0.95).
        for (double c : bounds) {
            assertEquals(3.841459, 2 * (fit.penalizedLogLikelihood() - constrained(problem, fit, 1, c, true)), 1e-5);
        }
    }

    /** Maximum of the (penalized) log-likelihood with coefficient j fixed at c, by a brute-force grid-free fit. */
    private static double constrained(FitProblem problem, FitResult fit, int j, double c, boolean penalized) {
        // Fix beta_j = c by moving c * x_j into the offset (valid for the unpenalized likelihood only); for the
        // penalized case use the library's own constrained profile via a one-point interval evaluation.
        if (!penalized) {
            int p = problem.columns();
            double[] offset = new double[problem.rows()];
            int[] keep = new int[p - 1];
            for (int k = 0, a = 0; k < p; k++) {
                if (k != j) {
                    keep[a++] = k;
                }
            }
            for (int i = 0; i < problem.rows(); i++) {
                offset[i] = c * problem.x()[i * p + j];
            }
            FitProblem reduced = problem.selectColumns(keep);
            FitProblem withOffset = new FitProblem(reduced.rows(), reduced.columns(), reduced.x(), reduced.trials(),
                    reduced.positives(), offset);
            return NewtonFitter.fit(withOffset, null, FitControl.defaults()).logLikelihood();
        }
        return PenalizedProfile.at(problem, fit, j, c);
    }
}
