package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FirthFitter;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.fit.ModelFit;
import org.oddswatch.estimator.fit.ModelFitter;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.terms.UndeclaredLevelPolicy;

/**
 * Logistic fits against fixtures written by src/test/reference/glm_fixtures.R. Each fixture's first
 * line names R's version (and brglm2's for the Firth fit).
 */
class GlmReferenceTest {

    static final String DIR = "/reference/glm/";

    static DesignCoder groupedCoder() {
        return new DesignCoder(List.of(
                new CategoricalTerm("age", List.of("0-17", "18-29", "30-49", "50-69", "70+"), "18-29",
                        UndeclaredLevelPolicy.REJECT, null, false),
                new BinaryTerm("contact", "yes", "no", null, true),
                new BinaryTerm("sex", "male", "female", null, false)));
    }

    static FitProblem grouped() {
        return Fixture.problem(groupedCoder(), Fixture.rows(DIR + "grouped-data.csv"),
                new String[] {"age", "contact", "sex"}, "trials", "positives");
    }

    static DesignCoder individualCoder() {
        return new DesignCoder(List.of(new NumericTerm("age", 10, true),
                new BinaryTerm("travel", "yes", "no", null, true),
                new CategoricalTerm("clinic", List.of("central", "harbour", "hill", "valley"), "central", null, null,
                        false)));
    }

    static FitProblem individual() {
        return Fixture.problem(individualCoder(), Fixture.rows(DIR + "individual-data.csv"),
                new String[] {"age", "travel", "clinic"}, null, "positive");
    }

    static DesignCoder rareCoder() {
        return new DesignCoder(List.of(new BinaryTerm("contact", "yes", "no", null, true),
                new BinaryTerm("sex", "male", "female", null, false),
                new CategoricalTerm("band", List.of("adult", "child", "senior"), "adult", null, null, false)));
    }

    static FitProblem rare() {
        return Fixture.problem(rareCoder(), Fixture.rows(DIR + "rare-data.csv"),
                new String[] {"contact", "sex", "band"}, null, "positive");
    }

    static DesignCoder separatedCoder() {
        return new DesignCoder(List.of(new BinaryTerm("contact", "yes", "no", null, true),
                new NumericTerm("age", 10, false)));
    }

    static FitProblem separated() {
        return Fixture.problem(separatedCoder(), Fixture.rows(DIR + "separated-data.csv"),
                new String[] {"contact", "age"}, null, "positive");
    }

    private static void assertMatches(String fixture, FitResult fit) {
        double[][] expected = Fixture.fit(DIR + fixture);
        assertEquals(expected[0].length, fit.coefficients().length, "columns");
        for (int j = 0; j < expected[0].length; j++) {
            assertEquals(expected[0][j], fit.coefficients()[j], 1e-6, fixture + " coefficient " + j);
            assertEquals(expected[1][j], fit.standardError(j), 1e-6 * expected[1][j], fixture + " SE " + j);
        }
    }

    @Test
    void groupedCountsWithCategoricalTerms() {
        FitResult fit = NewtonFitter.fit(grouped(), null, FitControl.defaults());
        assertTrue(fit.converged());
        // Source: R 4.2.2 stats::glm on grouped-data.csv (fixture grouped-fit.csv, first line names the version)
        assertMatches("grouped-fit.csv", fit);
    }

    @Test
    void individualRowsWithANumericTerm() {
        FitResult fit = NewtonFitter.fit(individual(), null, FitControl.defaults());
        assertTrue(fit.converged());
        // Source: R 4.2.2 stats::glm on individual-data.csv (fixture individual-fit.csv)
        assertMatches("individual-fit.csv", fit);
        // Source: the same fixture's logLik line (individual rows: no binomial-coefficient constant)
        assertEquals(-363.89730638140509, fit.logLikelihood(), 1e-8);
    }

    @Test
    void rareOutcomeUnderTwoPercent() {
        FitProblem problem = rare();
        assertTrue(problem.totalPositives() / problem.totalTrials() < 0.02);
        FitResult fit = NewtonFitter.fit(problem, null, FitControl.defaults());
        assertTrue(fit.converged());
        // Source: R 4.2.2 stats::glm on rare-data.csv (fixture rare-fit.csv)
        assertMatches("rare-fit.csv", fit);
    }

    @Test
    void separatedDataGetFirthEstimates() {
        FitResult firth = FirthFitter.fit(separated(), null, FitControl.defaults());
        assertTrue(firth.converged());
        assertEquals(FitMethod.FIRTH, firth.method());
        // Source: brglm2 0.9 brglmFit type "MPL_Jeffreys" (Firth) under R 4.2.2 (fixture separated-firth-fit.csv)
        assertMatches("separated-firth-fit.csv", firth);
    }

    @Test
    void separationIsDetectedAndTheModelFitterFallsBackToFirth() {
        ModelFit fit = ModelFitter.fit(separated(), null, FitControl.defaults());
        assertEquals(FitState.SEPARATION, fit.state());
        assertEquals(FitMethod.FIRTH, fit.method());
        assertTrue(java.util.Arrays.stream(fit.separating()).anyMatch(j -> j == 1), "contact is involved");
        double[][] expected = Fixture.fit(DIR + "separated-firth-fit.csv");
        assertArrayEquals(expected[0], fit.fit().coefficients(), 1e-6);
    }

    @Test
    void fixturesNameTheirLibraryVersion() {
        for (String f : List.of("grouped-fit.csv", "individual-fit.csv", "rare-fit.csv", "separated-firth-fit.csv")) {
            assertTrue(Fixture.source(DIR + f).startsWith("# Source: R version "), f);
        }
        assertTrue(Fixture.source(DIR + "separated-firth-fit.csv").contains("brglm2 "));
        List<Map<String, String>> rows = Fixture.rows(DIR + "rare-data.csv");
        assertEquals(8000, rows.size());
    }
}
