package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.prevalence.OddsRatio2x2;
import org.oddswatch.estimator.prevalence.OddsRatioEstimate;
import org.oddswatch.estimator.prevalence.TwoByTwoTable;

class TwoByTwoTableTest {

    @Test
    void fittedOddsRatioIsTheCrossProductRatioWithWoolfsStandardError() {
        long a = 47;
        long b = 153;
        long c = 31;
        long d = 269;
        // Rows: exposed (x = 1) with a positives of a + b; unexposed (x = 0) with c positives of c + d.
        FitProblem problem = FitProblem.of(2, 2, new double[] {1, 1, 1, 0}, new double[] {a + b, c + d},
                new double[] {a, c});
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        // Source: the saturated logistic model of a 2x2 table reproduces OR = ad/bc and Woolf's (1955)
        // se(log OR) = sqrt(1/a + 1/b + 1/c + 1/d) (standard result, e.g. Agresti, Categorical Data Analysis).
        double or = (double) (a * d) / (b * c);
        assertEquals(or, Math.exp(fit.coefficients()[1]), 1e-12 * or);
        double woolf = Math.sqrt(1.0 / a + 1.0 / b + 1.0 / c + 1.0 / d);
        assertEquals(woolf, fit.standardError(1), 1e-12);
        double z = 1.959963984540054;
        assertEquals(Math.exp(Math.log(or) - z * woolf), Math.exp(fit.coefficients()[1] - z * fit.standardError(1)),
                1e-10);
        OddsRatioEstimate table = OddsRatio2x2.woolf(new TwoByTwoTable(a, b, c, d), 0.95);
        assertEquals(table.lower(), Math.exp(fit.coefficients()[1] - z * fit.standardError(1)), 1e-9);
        assertEquals(table.upper(), Math.exp(fit.coefficients()[1] + z * fit.standardError(1)), 1e-9);
    }
}
