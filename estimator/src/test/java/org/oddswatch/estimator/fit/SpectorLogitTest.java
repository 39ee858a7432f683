package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

class SpectorLogitTest {

    /** GRADE on intercept, GPA, TUCE, PSI; the 32 individual rows of spector.csv. */
    static FitProblem spector() {
        List<double[]> rows = TestData.table("spector.csv");
        int n = rows.size();
        double[] x = new double[n * 4];
        double[] trials = new double[n];
        double[] positives = new double[n];
        for (int i = 0; i < n; i++) {
            double[] r = rows.get(i);
            x[i * 4] = 1;
            x[i * 4 + 1] = r[1];
            x[i * 4 + 2] = r[2];
            x[i * 4 + 3] = r[3];
            trials[i] = 1;
            positives[i] = r[4];
        }
        return FitProblem.of(n, 4, x, trials, positives);
    }

    @Test
    void reproducesTheTextbookLogit() {
        FitResult fit = NewtonFitter.fit(spector(), null, FitControl.defaults());
        assertTrue(fit.converged());
        assertEquals(32, spector().rows());
        // Source: Greene, Econometric Analysis, logit example (from memory; docs/references.md, Spector & Mazzeo 1980);
        // reproduced by statsmodels Logit on Debian's spector.csv.
        double[] coef = {-13.0213, 2.8261, 0.095158, 2.3787};
        double[] se = {4.9313, 1.2629, 0.141554, 1.0646};
        for (int j = 0; j < 4; j++) {
            assertEquals(coef[j], fit.coefficients()[j], 1e-4, "coefficient " + j);
            assertEquals(se[j], fit.standardError(j), 1e-4, "standard error " + j);
        }
    }

    @Test
    void warmStartGivesTheSameEstimates() {
        FitResult cold = NewtonFitter.fit(spector(), null, FitControl.defaults());
        FitResult warm = NewtonFitter.fit(spector(), new double[] {-12, 2.5, 0.1, 2}, FitControl.defaults());
        assertTrue(warm.warmStartUsed());
        for (int j = 0; j < 4; j++) {
            assertEquals(cold.coefficients()[j], warm.coefficients()[j], 1e-12);
        }
    }
}
