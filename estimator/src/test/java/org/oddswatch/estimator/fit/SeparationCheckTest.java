package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** Separation verdicts by constraint generation against the programme solved in one piece, and on large designs. */
class SeparationCheckTest {

    private static FitProblem withIntercept(double[][] columns, double[] y) {
        int n = y.length;
        int p = columns.length + 1;
        double[] x = new double[n * p];
        double[] trials = new double[n];
        for (int i = 0; i < n; i++) {
            x[i * p] = 1;
            for (int j = 1; j < p; j++) {
                x[i * p + j] = columns[j - 1][i];
            }
            trials[i] = 1;
        }
        return FitProblem.of(n, p, x, trials, y.clone());
    }

    @Test
    void textbookCompleteAndQuasiCompleteSeparation() {
        // Source: the two ten- and eight-row examples of "What is complete or quasi-complete separation in
        // logistic regression" (UCLA OARC statistics FAQ): X1 separates Y completely, or quasi-completely with
        // both outcomes at X1 = 3; X2 is not involved.
        FitProblem complete = withIntercept(new double[][] {{1, 2, 3, 3, 5, 6, 10, 11}, {3, 2, -1, -1, 2, 4, 1, 0}},
                new double[] {0, 0, 0, 0, 1, 1, 1, 1});
        SeparationCheck.Outcome c = SeparationCheck.check(complete);
        assertEquals(SeparationCheck.Verdict.SEPARATED, c.verdict());
        assertTrue(contains(c.involved(), 1), "X1 involved");
        FitProblem quasi = withIntercept(new double[][] {{1, 2, 3, 3, 3, 4, 5, 6, 10, 11},
            {3, 0, -1, 4, 1, 0, 2, 7, 3, 4}}, new double[] {0, 0, 0, 0, 1, 1, 1, 1, 1, 1});
        SeparationCheck.Outcome q = SeparationCheck.check(quasi);
        assertEquals(SeparationCheck.Verdict.SEPARATED, q.verdict());
        assertArrayEquals(new int[] {0, 1}, q.involved(), "intercept and X1, not X2");
        assertArrayEquals(DenseSeparationProgramme.separatingColumns(quasi), q.involved());
        // One more positive at X1 = 2 breaks the separation.
        FitProblem overlap = withIntercept(new double[][] {{1, 2, 3, 3, 3, 4, 5, 6, 10, 11, 2},
            {3, 0, -1, 4, 1, 0, 2, 7, 3, 4, 1}}, new double[] {0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 1});
        assertEquals(SeparationCheck.Verdict.NONE, SeparationCheck.check(overlap).verdict());
    }

    /**
     * Random small designs, about half of them separated (strong effects, few rows): the same verdict as
     * the dense programme over all points, and when separated a direction that is optimal for that whole
     * programme (feasible for every point, same objective value). The involved columns are those of that
     * optimal direction; where the programme has several optimal vertices either may be reported.
     */
    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20})
    void agreesWithTheWholeProgramme(long seed) {
        for (int k = 0; k < 10; k++) {
            FitProblem problem = smallDesign(new SplittableRandom(seed * 100 + k));
            double optimum = DenseSeparationProgramme.optimum(problem);
            SeparationCheck.Outcome outcome = SeparationCheck.check(problem);
            String where = "seed " + seed + "/" + k;
            if (optimum <= 1e-7) {
                assertEquals(SeparationCheck.Verdict.NONE, outcome.verdict(), where);
            } else {
                assertEquals(SeparationCheck.Verdict.SEPARATED, outcome.verdict(), where);
                assertFeasible(problem, outcome.direction(), where);
                assertEquals(optimum, DenseSeparationProgramme.objective(problem, outcome.direction()),
                        1e-9 * optimum, where);
            }
        }
    }

    private static void assertFeasible(FitProblem problem, double[] b, String where) {
        int p = problem.columns();
        for (int i = 0; i < problem.rows(); i++) {
            double eta = 0;
            double norm = 0;
            for (int j = 0; j < p; j++) {
                eta += problem.x()[i * p + j] * b[j];
                norm += Math.abs(problem.x()[i * p + j]);
            }
            if (problem.positives()[i] > 0) {
                assertTrue(eta >= -1e-9 * norm, where + " row " + i);
            }
            if (problem.trials()[i] > problem.positives()[i]) {
                assertTrue(eta <= 1e-9 * norm, where + " row " + i);
            }
        }
    }

    private static FitProblem smallDesign(SplittableRandom random) {
        int p = 2 + random.nextInt(4);
        int n = 6 + random.nextInt(60);
        double[] beta = new double[p];
        for (int j = 0; j < p; j++) {
            beta[j] = random.nextDouble(-4, 4);
        }
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        for (int i = 0; i < n; i++) {
            x[i * p] = 1;
            double eta = beta[0];
            for (int j = 1; j < p; j++) {
                double v = j % 2 == 0 ? random.nextInt(2) : random.nextInt(7) - 3;
                x[i * p + j] = v;
                eta += v * beta[j];
            }
            trials[i] = 1 + random.nextInt(3);
            double mu = 1 / (1 + Math.exp(-eta));
            for (int t = 0; t < trials[i]; t++) {
                positives[i] += random.nextDouble() < mu ? 1 : 0;
            }
        }
        return FitProblem.of(n, p, x, trials, positives);
    }

    /** Designs with more points than the dense programme was ever run on (it stopped at 4,000). */
    @Test
    void largeDesignsAreDecidedExactly() {
        SplittableRandom random = new SplittableRandom(2026);
        int n = 200_000;
        double[] age = new double[n];
        double[] contact = new double[n];
        double[] complete = new double[n];
        double[] quasi = new double[n];
        double[] overlapping = new double[n];
        for (int i = 0; i < n; i++) {
            age[i] = Math.floor(random.nextDouble() * 90);
            contact[i] = random.nextInt(2);
            double mu = 1 / (1 + Math.exp(-(-2 + 0.02 * age[i] + contact[i])));
            boolean draw = random.nextDouble() < mu;
            // Complete: positive exactly when age is 60 or more.
            complete[i] = age[i] >= 59.5 ? 1 : 0;
            // Quasi-complete: no positive without contact.
            quasi[i] = contact[i] == 1 && draw ? 1 : 0;
            overlapping[i] = draw ? 1 : 0;
        }
        FitProblem completeProblem = withIntercept(new double[][] {age, contact}, complete);
        SeparationCheck.Outcome c = SeparationCheck.check(completeProblem);
        assertEquals(SeparationCheck.Verdict.SEPARATED, c.verdict());
        // Complete separation leaves slack, so the optimum may also lean on contact; age is always in it.
        assertTrue(contains(c.involved(), 1), "age involved");
        assertFeasible(completeProblem, c.direction(), "complete");
        SeparationCheck.Outcome q = SeparationCheck.check(withIntercept(new double[][] {age, contact}, quasi));
        assertEquals(SeparationCheck.Verdict.SEPARATED, q.verdict());
        assertArrayEquals(new int[] {0, 2}, q.involved(), "intercept and contact");
        SeparationCheck.Outcome o = SeparationCheck.check(withIntercept(new double[][] {age, contact}, overlapping));
        assertEquals(SeparationCheck.Verdict.NONE, o.verdict());
        assertTrue(c.points() < 1000 && q.points() < 1000 && o.points() < 1000,
                c.points() + " " + q.points() + " " + o.points());
    }

    private static boolean contains(int[] values, int v) {
        for (int a : values) {
            if (a == v) {
                return true;
            }
        }
        return false;
    }
}
