package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.EstimatorOptions;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;

class PrevalenceTest {

    @Test
    void defaultsToWilsonAtTheConfiguredLevel() {
        PrevalenceEstimate p = Prevalence.of(263, 81, EstimatorOptions.defaults());
        assertEquals("wilson", p.method());
        BinomialInterval wilson = BinomialInterval.wilson(81, 263, 0.95);
        assertEquals(wilson.lower(), p.lower());
        assertEquals(wilson.upper(), p.upper());
        assertNull(p.adjusted());
        PrevalenceEstimate p90 = Prevalence.of(263, 81, EstimatorOptions.defaults().withLevel(0.90)
                .withPrevalenceInterval("jeffreys"));
        assertEquals("jeffreys", p90.method());
        assertEquals(BinomialInterval.jeffreys(81, 263, 0.90).lower(), p90.lower());
    }

    @Test
    void emptyWindowHasNullsAndANote() {
        List<String> notes = new ArrayList<>();
        PrevalenceEstimate p = Prevalence.of(0, 0, EstimatorOptions.defaults(), notes::add);
        assertNull(p.value());
        assertNull(p.lower());
        assertNull(p.upper());
        assertEquals(1, notes.size());
    }

    @Test
    void adjustsForTestAccuracyWhenBothAreSet() {
        List<String> notes = new ArrayList<>();
        PrevalenceEstimate p = Prevalence.of(200, 30, EstimatorOptions.defaults().withTestAccuracy(0.9, 0.95),
                notes::add);
        assertEquals(2.0 / 17, p.adjusted().value(), 1e-15);
        assertTrue(notes.isEmpty());
        PrevalenceEstimate clipped = Prevalence.of(200, 2, EstimatorOptions.defaults().withTestAccuracy(0.9, 0.95),
                notes::add);
        assertTrue(clipped.adjusted().clipped());
        assertEquals(1, notes.size());
        EstimatorOptions half = new EstimatorOptions(0.95, 10, 25, "wilson", null, 0.9, null, false);
        assertThrows(IllegalArgumentException.class, () -> Prevalence.of(200, 2, half));
    }

    @Test
    void strataFollowTheLevelOrderAndTolerateEmptyLevels() {
        List<StratumPrevalence> strata = Prevalence.strata("clinic", List.of("north", "south", "east"),
                new long[] {100, 0, 40}, new long[] {12, 0, 40}, EstimatorOptions.defaults()
                        .withPrevalenceInterval("clopper-pearson"));
        assertEquals(3, strata.size());
        assertEquals("north", strata.get(0).level());
        assertEquals(0.12, strata.get(0).value(), 1e-15);
        assertEquals(BinomialInterval.clopperPearson(12, 100, 0.95).lower(), strata.get(0).lower());
        assertNull(strata.get(1).value());
        assertNull(strata.get(1).lower());
        assertEquals(1.0, strata.get(2).upper(), 0);
        assertThrows(IllegalArgumentException.class, () -> Prevalence.strata("clinic", List.of("north"),
                new long[] {1, 2}, new long[] {0, 0}, EstimatorOptions.defaults()));
    }

    @Test
    void unknownMethodLabelIsAClearError() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> Prevalence.of(10, 1, EstimatorOptions.defaults().withPrevalenceInterval("agresti")));
        assertTrue(e.getMessage().contains("agresti"));
    }
}
