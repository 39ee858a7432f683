package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertAll;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.function.Predicate;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.fit.ModelFit;
import org.oddswatch.estimator.fit.ModelFitter;
import org.oddswatch.estimator.fit.SeparationCheck;

/**
 * Randomized differential test of the window model's fitting path ({@link ModelFitter}: rank check,
 * Newton, separation check, Firth) against general-purpose libraries, on the designs of
 * random-designs.csv (src/test/reference/random_designs.py): at least 2,000 random well-posed
 * designs with 1 to 20 columns, in pattern storage (up to 10 million trials) and row storage,
 * prevalence 0.1 % to 50 %, uncentered numeric terms and near-collinear columns, fitted by statsmodels'
 * GLM; and separated designs fitted by brglm2's Firth fit.
 *
 * <p>Agreement: a coefficient within {@code 1e-6 max(|b|, se)} of the reference (relative where
 * the coefficient is far from 0, in standard-error units near 0, so the check does not depend on a
 * column's units); a standard error within {@code 1e-6 se} (relative).
 */
class RandomDesignReferenceTest {

    private static final double TOLERANCE = 1e-6;

    private record Outcome(RandomDesigns design, ModelFit fit, String mismatch) {
    }

    private static List<Outcome> outcomes;

    @BeforeAll
    static void fitEveryDesign() {
        outcomes = new ArrayList<>();
        for (RandomDesigns d : RandomDesigns.load()) {
            ModelFit fit = ModelFitter.fit(d.problem(), null, FitControl.defaults());
            outcomes.add(new Outcome(d, fit, mismatch(d, fit)));
        }
    }

    private static String mismatch(RandomDesigns d, ModelFit fit) {
        double[] b = fit.fullCoefficients(d.columns());
        for (int j = 0; j < d.columns(); j++) {
            double want = d.coef()[j];
            double se = d.se()[j];
            int a = fit.keptIndex(j);
            double gotSe = a < 0 ? Double.NaN : fit.fit().standardError(a);
            if (!(Math.abs(b[j] - want) <= TOLERANCE * Math.max(Math.abs(want), se))) {
                return String.format(Locale.ROOT, "coefficient %d: %.17g, reference %.17g (se %.3g)", j, b[j], want, se);
            }
            if (!(Math.abs(gotSe - se) <= TOLERANCE * se)) {
                return String.format(Locale.ROOT, "se %d: %.17g, reference %.17g", j, gotSe, se);
            }
        }
        return null;
    }

    private static List<Outcome> of(String reference) {
        return outcomes.stream().filter(o -> o.design.reference().equals(reference)).toList();
    }

    private static String describe(List<Outcome> list) {
        StringBuilder s = new StringBuilder();
        s.append(list.stream().map(o -> String.valueOf(o.design.id())).collect(java.util.stream.Collectors.joining(
                ", ", " (ids ", ")")));
        list.forEach(o -> s.append(String.format(Locale.ROOT,
                "%n  design %d (%s, %d columns, %d rows, %d trials): %s, %d iterations, max scaled score %.3g%s",
                o.design.id(), o.design.storage(), o.design.columns(), o.design.rows(), o.design.totalTrials(),
                o.fit.state(), o.fit.fit().iterations(), o.fit.fit().maxAbsScore(),
                o.mismatch == null ? "" : "; " + o.mismatch)));
        return list.size() + " of them" + s;
    }

    @Test
    void everyDesignIsRebuiltExactlyAsTheScriptBuiltIt() {
        // Source: sha256 of the design's doubles written by random_designs.py beside each design.
        List<Integer> differ = outcomes.stream().map(Outcome::design).filter(d -> !d.sha256().equals(d.expectedSha256()))
                .map(RandomDesigns::id).toList();
        assertEquals(List.of(), differ, "designs the Java generator rebuilds differently");
    }

    @Test
    void theFixtureCoversTheRequiredRanges() {
        List<RandomDesigns> ml = of("ml").stream().map(Outcome::design).toList();
        assertTrue(ml.size() >= 2000, "at least 2,000 well-posed designs, got " + ml.size());
        assertTrue(Fixture.source(RandomDesigns.RESOURCE).startsWith("# Source: statsmodels "));
        assertTrue(Fixture.source(RandomDesigns.RESOURCE).contains("brglm2 "));
        assertEquals(1, ml.stream().mapToInt(RandomDesigns::columns).min().orElseThrow());
        assertEquals(20, ml.stream().mapToInt(RandomDesigns::columns).max().orElseThrow());
        assertTrue(ml.stream().anyMatch(d -> d.storage().equals("rows")) && ml.stream().anyMatch(
                d -> d.storage().equals("patterns")), "both storages");
        assertTrue(ml.stream().mapToLong(RandomDesigns::totalTrials).max().orElseThrow() > 9_000_000, "near 10^7 trials");
        assertTrue(ml.stream().anyMatch(d -> d.storage().equals("patterns") && d.cap() == 1), "patterns of 1 to 2 trials");
        double[] prevalence = ml.stream().mapToDouble(d -> Arrays.stream(d.positives()).sum() / d.totalTrials()).toArray();
        assertTrue(Arrays.stream(prevalence).min().orElseThrow() < 0.002, "prevalence near 0.1 %");
        assertTrue(Arrays.stream(prevalence).max().orElseThrow() > 0.4, "prevalence near 50 %");
        Predicate<RandomDesigns> year = d -> Arrays.stream(d.spec()).anyMatch(t -> t.startsWith("u20"));
        Predicate<RandomDesigns> days = d -> Arrays.asList(d.spec()).contains("u0:36525:1");
        Predicate<RandomDesigns> collinear = d -> Arrays.stream(d.spec()).anyMatch(t -> t.startsWith("k"));
        assertTrue(ml.stream().filter(year).count() >= 100, "uncentered calendar years");
        assertTrue(ml.stream().filter(days).count() >= 100, "ages in days");
        assertTrue(ml.stream().filter(collinear).count() >= 100, "near-collinear columns");
        assertTrue(of("firth").size() >= 100, "separated designs");
    }

    @Test
    void noWellPosedDesignIsReportedNotConverged() {
        List<Outcome> failed = of("ml").stream().filter(o -> o.fit.state() != FitState.CONVERGED).toList();
        // Source: statsmodels GLM (IRLS) reached each design's maximum-likelihood estimate (scaled score
        // below 1e-7 there) and scipy's linprog found no separating direction: every design is well posed.
        assertEquals(0, failed.size(), () -> "designs not reported converged: " + describe(failed));
    }

    @Test
    void maximumLikelihoodEstimatesAndStandardErrorsAgreeWithStatsmodels() {
        List<Outcome> differ = of("ml").stream().filter(o -> o.mismatch != null).toList();
        // Source: statsmodels GLM(Binomial) params and bse, named with its version in random-designs.csv.
        assertEquals(0, differ.size(), () -> "designs that differ from statsmodels by more than 1e-6: "
                + describe(differ));
    }

    /**
     * The exact check on its own, on every design (not only those whose Newton fit looked divergent):
     * raw columns such as ages in days and calendar years must not turn rounding into a separating
     * direction, nor hide one. UNDECIDED (Commons Math's simplex failed in every formulation, or returned
     * a point violating its own constraints) is no wrong answer, since ModelFitter then decides from a
     * Newton fit, but it must stay rare: 107 of the 2,109 designs with the phase-one formulation alone,
     * 7 with the all-{@code <=} fallback, none since the split formulation is tried first.
     */
    @Test
    void theSeparationCheckAgreesWithHighsOnEveryDesign() {
        List<String> wrong = new ArrayList<>();
        List<Integer> undecided = new ArrayList<>();
        for (Outcome o : outcomes) {
            // Source: scipy.optimize.linprog (HiGHS) in random_designs.py: a separating direction exists for the
            // "firth" designs and none for the "ml" designs.
            SeparationCheck.Verdict want = o.design.reference().equals("firth") ? SeparationCheck.Verdict.SEPARATED
                    : SeparationCheck.Verdict.NONE;
            SeparationCheck.Verdict got = SeparationCheck.check(o.design.problem()).verdict();
            if (got == SeparationCheck.Verdict.UNDECIDED) {
                undecided.add(o.design.id());
            } else if (got != want) {
                wrong.add(o.design.id() + ": " + got);
            }
        }
        assertAll(
                () -> assertEquals(List.of(), wrong, "designs where the separation check contradicts HiGHS"),
                () -> assertTrue(undecided.isEmpty(), "designs the check left undecided: " + undecided));
    }

    @Test
    void separatedDesignsGetFirthEstimatesThatAgreeWithBrglm2() {
        List<Outcome> firth = of("firth");
        List<Outcome> notFirth = firth.stream().filter(o -> o.fit.state() != FitState.SEPARATION
                || o.fit.method() != FitMethod.FIRTH).toList();
        List<Outcome> differ = firth.stream().filter(o -> o.mismatch != null).toList();
        assertAll(
                // Source: scipy's linprog (HiGHS) found a separating direction in each of these designs.
                () -> assertEquals(0, notFirth.size(), () -> "separated designs not fitted by Firth: "
                        + describe(notFirth)),
                // Source: brglm2 brglmFit(type = "MPL_Jeffreys") coefficients and standard errors (version in
                // the fixture).
                () -> assertEquals(0, differ.size(), () -> "Firth fits that differ from brglm2 by more than 1e-6: "
                        + describe(differ)));
    }
}
