package org.oddswatch.estimator;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.lang.reflect.RecordComponent;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Function;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.Term;
import org.oddswatch.estimator.window.WindowData;
import org.oddswatch.estimator.window.WindowStore;

/** Window estimates for ordinary and awkward windows; none may hold NaN or infinity. */
class WindowEstimatorTest {

    private static final Instant START = Instant.parse("2026-02-02T00:00:00Z");
    private static final Instant END = Instant.parse("2026-03-02T00:00:00Z");

    private static WindowData scenarioWindow(long seed, int events, double missing) {
        DesignCoder coder = HouseScenario.coder(false);
        WindowStore store = new WindowStore(coder, 10_000, 4);
        HouseScenario scenario = new HouseScenario(seed, false, missing);
        double[] row = new double[coder.width()];
        for (int k = 0; k < events; k++) {
            HouseScenario.add(coder, store, 0, scenario.next(), row);
        }
        return store.window(0, 1);
    }

    private static WindowEstimate estimate(DesignCoder coder, EstimatorOptions options, WindowData data) {
        return new WindowEstimator(coder, options).estimate("north", START, END, WindowStatus.FINAL, data, null, null);
    }

    /** Events from raw values; {@code outcome} decides positivity from the raw values and the index. */
    private static WindowData window(DesignCoder coder, List<Object[]> raws, Function<Integer, Boolean> outcome) {
        WindowStore store = new WindowStore(coder, 10_000, 0);
        double[] row = new double[coder.width()];
        for (int k = 0; k < raws.size(); k++) {
            boolean ok = coder.code(raws.get(k), row).isOk();
            store.add(0, ok ? row : null, outcome.apply(k), -1);
        }
        return store.window(0, 1);
    }

    /** Every double anywhere in the estimate is finite. */
    static void assertAllFinite(Object value, String path) {
        if (value == null) {
            return;
        }
        if (value instanceof Double d) {
            assertTrue(Double.isFinite(d), path + " = " + d);
        } else if (value instanceof List<?> list) {
            for (int k = 0; k < list.size(); k++) {
                assertAllFinite(list.get(k), path + "[" + k + "]");
            }
        } else if (value.getClass().isRecord()) {
            for (RecordComponent c : value.getClass().getRecordComponents()) {
                try {
                    assertAllFinite(c.getAccessor().invoke(value), path + "." + c.getName());
                } catch (ReflectiveOperationException e) {
                    throw new AssertionError(e);
                }
            }
        }
    }

    @Test
    void anOrdinaryWindowRecoversTheScenarioAndReportsWatchedTermsInFull() {
        WindowData data = scenarioWindow(1, 20_000, 0.01);
        EstimatorOptions options = EstimatorOptions.defaults().withStratifyBy("region");
        WindowEstimate e = estimate(HouseScenario.coder(false), options, data);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.CONVERGED, e.fit().state());
        assertEquals(FitMethod.NEWTON, e.fit().method());
        assertEquals(20_000, e.events());
        assertTrue(e.fit().events() < 20_000);
        assertEquals(4, e.strata().size());
        CoefficientEstimate contact = e.coefficient("household_contact", "yes");
        // Source: the scenario's true log odds ratio 0.9 (HouseScenario javadoc); 20,000 events give se ~ 0.04.
        assertEquals(0.9, contact.coef(), 0.15);
        assertEquals("wald", contact.interval());
        assertTrue(contact.profileLower() < contact.oddsRatio() && contact.oddsRatio() < contact.profileUpper());
        assertEquals(1, contact.lrDf());
        assertTrue(contact.lrChiSquare() > 100 && contact.lrP() < 1e-20);
        assertNull(e.coefficient("age_band", "0-17").profileLower(), "age band is not watched");
        assertNull(e.coefficient("intercept", null).oddsRatio());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("left out of the model")));
        WindowEstimate again = estimate(HouseScenario.coder(false), options, data);
        assertEquals(e, again, "same input, equal estimate");
    }

    @Test
    void aWarmStartFromTheLastEstimateGivesTheSameAnswerInFewerIterations() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults());
        WindowEstimate first = estimator.estimate("s", START, END, WindowStatus.FINAL, scenarioWindow(2, 20_000, 0),
                null, null);
        double[] warm = estimator.coefficientVector(first);
        assertEquals(coder.width(), warm.length);
        WindowData next = scenarioWindow(2, 20_000, 0);
        WindowEstimate warmed = estimator.estimate("s", START, END, WindowStatus.FINAL, next, warm, null);
        assertTrue(warmed.fit().warmStart());
        assertTrue(warmed.fit().iterations() <= 2);
        assertEquals(first.coefficient("household_contact", "yes").coef(),
                warmed.coefficient("household_contact", "yes").coef(), 1e-12);
    }

    @Test
    void anEmptyWindowHasNoModelAndNoPrevalenceValue() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowData empty = new WindowStore(coder, 100, 4).window(0, 1);
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults().withStratifyBy("region"), empty);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.NO_MODEL, e.fit().state());
        assertNull(e.prevalence().value());
        assertTrue(e.coefficients().isEmpty());
        assertNull(new WindowEstimator(coder, EstimatorOptions.defaults()).coefficientVector(e));
        assertFalse(e.notes().isEmpty());
    }

    @Test
    void noPositivesOrNoCompleteCasesGiveNoModel() {
        DesignCoder coder = HouseScenario.coder(false);
        List<Object[]> raws = new ArrayList<>();
        for (int k = 0; k < 50; k++) {
            raws.add(new Object[] {k % 2 == 0 ? "yes" : "no", HouseScenario.AGE.get(k % 5), "male", "north"});
        }
        WindowEstimate none = estimate(coder, EstimatorOptions.defaults(), window(coder, raws, k -> false));
        assertEquals(FitState.NO_MODEL, none.fit().state());
        assertEquals(0.0, none.prevalence().value());
        assertTrue(none.notes().stream().anyMatch(n -> n.contains("no positives")));
        List<Object[]> incomplete = new ArrayList<>();
        for (int k = 0; k < 20; k++) {
            incomplete.add(new Object[] {"yes", "0-17", null, "north"});
        }
        WindowEstimate missing = estimate(coder, EstimatorOptions.defaults(), window(coder, incomplete, k -> k < 5));
        assertEquals(FitState.NO_MODEL, missing.fit().state());
        assertEquals(20, missing.events());
        assertEquals(0.25, missing.prevalence().value(), 1e-15);
        assertAllFinite(none, "none");
        assertAllFinite(missing, "missing");
    }

    /** Raw events of a small two-term model, outcome by a fixed seeded draw. */
    private static List<Object[]> twoTermEvents(int n, Function<Integer, Object[]> make) {
        List<Object[]> raws = new ArrayList<>();
        for (int k = 0; k < n; k++) {
            raws.add(make.apply(k));
        }
        return raws;
    }

    private static final Function<Integer, Boolean> MIXED = k -> (k * 7919L) % 5 < 2;

    @Test
    void aConstantColumnIsDroppedAndNamed() {
        DesignCoder coder = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new BinaryTerm("sex", "male", "female", null, false)));
        WindowData d = window(coder, twoTermEvents(400, k -> new Object[] {k % 3 == 0 ? "yes" : "no", "male"}), MIXED);
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults(), d);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.RANK_DEFICIENT, e.fit().state());
        assertEquals(List.of("sex=male"), e.fit().dropped());
        assertNull(e.coefficient("sex", "male"));
        assertNotNull(e.coefficient("household_contact", "yes").se());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("sex=male") && n.contains("intercept")));
        assertEquals(0.0, new WindowEstimator(coder, EstimatorOptions.defaults()).coefficientVector(e)[2]);
    }

    @Test
    void anEmptyLevelIsDroppedAndNamed() {
        DesignCoder coder = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new CategoricalTerm("region", HouseScenario.REGION, "north", null, null, false)));
        WindowData d = window(coder, twoTermEvents(600, k -> new Object[] {k % 2 == 0 ? "yes" : "no",
                HouseScenario.REGION.get(k % 3)}), MIXED);
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults(), d);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.RANK_DEFICIENT, e.fit().state());
        assertEquals(List.of("region=west"), e.fit().dropped());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("no complete-case event has region=west")));
    }

    @Test
    void collinearColumnsDropTheLaterOne() {
        DesignCoder coder = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new BinaryTerm("recent_travel", "yes", "no", null, true),
                new BinaryTerm("no_household_contact", "yes", "no", null, false)));
        // The third indicator is 1 - contact: the intercept minus the first column.
        WindowData d = window(coder, twoTermEvents(500, k -> {
            boolean contact = k % 3 == 0;
            return new Object[] {contact ? "yes" : "no", k % 4 == 0 ? "yes" : "no", contact ? "no" : "yes"};
        }), MIXED);
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults(), d);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.RANK_DEFICIENT, e.fit().state());
        assertEquals(List.of("no_household_contact=yes"), e.fit().dropped());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("linear combination")));
    }

    @Test
    void separationSwitchesToFirthWithFiniteProfileIntervals() {
        DesignCoder coder = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new BinaryTerm("sex", "male", "female", null, false)));
        // No positive without household contact: quasi-complete separation.
        List<Object[]> raws = twoTermEvents(300, k -> new Object[] {k % 2 == 0 ? "yes" : "no",
                k % 5 < 2 ? "male" : "female"});
        WindowData d = window(coder, raws, k -> k % 2 == 0 && k % 3 != 0);
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults(), d);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.SEPARATION, e.fit().state());
        assertEquals(FitMethod.FIRTH, e.fit().method());
        CoefficientEstimate contact = e.coefficient("household_contact", "yes");
        assertNotNull(contact.se());
        assertNotNull(contact.profileLower());
        assertNotNull(contact.profileUpper());
        assertNotNull(contact.lrChiSquare());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("separated by household_contact=yes")));
    }

    @Test
    void tooFewEventsAreFlaggedButStillEstimated() {
        DesignCoder coder = HouseScenario.coder(false);
        // About 13 % of 500 events are positive: some 65 events for 9 non-intercept parameters.
        WindowData d = scenarioWindow(7, 500, 0);
        assertTrue(d.completePositives() < 90, "fewer than 10 per parameter");
        WindowEstimate e = estimate(coder, EstimatorOptions.defaults(), d);
        assertAllFinite(e, "estimate");
        assertEquals(FitState.TOO_FEW_EVENTS, e.fit().state());
        assertNotNull(e.coefficient("household_contact", "yes").se());
        assertTrue(e.notes().stream().anyMatch(n -> n.contains("per parameter")));
        WindowEstimate relaxed = estimate(coder, EstimatorOptions.defaults().withMinEventsPerParameter(2), d);
        assertEquals(FitState.CONVERGED, relaxed.fit().state());
    }

    @Test
    void anIterationCapTooLowGivesNotConvergedWithoutStandardErrors() {
        DesignCoder coder = HouseScenario.coder(false);
        EstimatorOptions options = new EstimatorOptions(0.95, 10, 1, "wilson", null, null, null, true);
        WindowEstimate e = estimate(coder, options, scenarioWindow(3, 5000, 0));
        assertAllFinite(e, "estimate");
        assertEquals(FitState.NOT_CONVERGED, e.fit().state());
        assertNull(e.coefficient("household_contact", "yes").se());
        assertNull(e.coefficient("household_contact", "yes").profileLower());
    }

    @Test
    void aBaselineIsFittedFrozenAndAssessedOnALaterWindow() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults());
        BaselineModel baseline = estimator.fitBaseline(scenarioWindow(4, 20_000, 0), "2026-01-01T00:00:00Z",
                "2026-02-01T00:00:00Z", "sha256:test");
        assertEquals(coder.width(), baseline.coefficients().length);
        assertEquals(0.9, baseline.coefficient("household_contact", "yes"), 0.15);
        WindowEstimate e = estimator.estimate("s", START, END, WindowStatus.INTERIM, scenarioWindow(5, 20_000, 0),
                null, baseline);
        assertNotNull(e.calibration());
        assertAllFinite(e, "estimate");
        // Same generating model: observed/expected near 1 and slope near 1 (common practice, no source).
        assertEquals(1.0, e.calibration().observedExpected(), 0.1);
        assertEquals(1.0, e.calibration().slope(), 0.2);
        WindowData noPositives = window(coder, twoTermEvents(10, k -> new Object[] {"yes", "0-17", "male", "north"}),
                k -> false);
        IllegalArgumentException error = assertThrows(IllegalArgumentException.class,
                () -> estimator.fitBaseline(noPositives, "a", "b", "c"));
        assertTrue(error.getMessage().contains("no positives"));
    }

    @Test
    void anUnknownStratumTermIsRefused() {
        List<Term> terms = HouseScenario.terms(false);
        assertThrows(IllegalArgumentException.class, () -> new WindowEstimator(new DesignCoder(terms),
                EstimatorOptions.defaults().withStratifyBy("sex")));
    }
}
