package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;

import java.util.SplittableRandom;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** The grouped pass equals the plain row-by-row pass (same likelihood, score and information). */
class IndicatorGroupsTest {

    @ParameterizedTest
    @ValueSource(longs = {1, 2, 3, 4, 5, 6, 7, 8})
    void groupedAndPlainPassesAgree(long seed) {
        FitProblem problem = FitPropertiesTest.randomProblem(seed);
        IndicatorGroups groups = IndicatorGroups.of(problem);
        assertNotNull(groups, "random designs have at most 3 numeric columns");
        SplittableRandom random = new SplittableRandom(seed);
        double[] beta = new double[problem.columns()];
        for (int j = 0; j < beta.length; j++) {
            beta[j] = random.nextDouble(-1, 1);
        }
        BinomialPass plain = BinomialPass.at(problem, null, beta, false);
        BinomialPass grouped = BinomialPass.at(problem, groups, beta, false);
        assertEquals(plain.logLikelihood, grouped.logLikelihood, 1e-10 * Math.abs(plain.logLikelihood));
        assertEquals(plain.maxAbsEta, grouped.maxAbsEta, 1e-12 * (1 + plain.maxAbsEta));
        for (int k = 0; k < plain.information.length; k++) {
            assertEquals(plain.information[k], grouped.information[k], 1e-10 * (1 + Math.abs(plain.information[k])));
        }
        for (int j = 0; j < beta.length; j++) {
            assertEquals(plain.score[j], grouped.score[j], 1e-9 * (1 + Math.abs(plain.score[j])));
        }
        // Firth's correction: hat values x' I^-1 x split into pattern and numeric parts per group.
        BinomialPass plainFirth = BinomialPass.at(problem, null, beta, true);
        BinomialPass groupedFirth = BinomialPass.at(problem, groups, beta, true);
        plainFirth.addFirthCorrection(problem, null);
        groupedFirth.addFirthCorrection(problem, groups);
        for (int j = 0; j < beta.length; j++) {
            assertEquals(plainFirth.score[j], groupedFirth.score[j], 1e-9 * (1 + Math.abs(plainFirth.score[j])));
        }
        int p = problem.columns();
        double[] c = groups.weightedCrossProduct(problem);
        for (int j = 0; j < p; j++) {
            for (int k = 0; k < p; k++) {
                double expected = 0;
                for (int i = 0; i < problem.rows(); i++) {
                    expected += problem.trials()[i] * problem.x()[i * p + j] * problem.x()[i * p + k];
                }
                assertEquals(expected, c[j * p + k], 1e-10 * (1 + Math.abs(expected)));
            }
        }
    }

    @ParameterizedTest
    @ValueSource(ints = {5, 6})
    void tooManyNumericColumnsFallBackToThePlainPass(int numeric) {
        int p = numeric + 1;
        double[] x = new double[10 * p];
        for (int i = 0; i < 10; i++) {
            x[i * p] = 1;
            for (int j = 1; j < p; j++) {
                x[i * p + j] = 0.5 * i + j;
            }
        }
        FitProblem problem = FitProblem.of(10, p, x, new double[10], new double[10]);
        assertNull(IndicatorGroups.of(problem));
    }
}
