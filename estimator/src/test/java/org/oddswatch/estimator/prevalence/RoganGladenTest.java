package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.result.AdjustedPrevalence;

class RoganGladenTest {

    @Test
    void workedValuesAgreeWithR() {
        // Source: rogan-gladen.csv from src/test/reference/tables_and_adjustment.R (R 4.2.2: prop.test /
        // binom.test intervals mapped by (p + Sp - 1) / (Se + Sp - 1), Rogan & Gladen 1978, clipped to [0, 1]).
        CsvFixture r = CsvFixture.load("/reference/rogan-gladen.csv");
        assertTrue(r.comments().get(0).contains("R version 4.2.2"));
        int clippedCases = 0;
        for (int i = 0; i < r.size(); i++) {
            long x = (long) r.number(i, "x");
            long n = (long) r.number(i, "n");
            BinomialIntervalMethod method = BinomialIntervalMethod.fromLabel(r.text(i, "method"));
            List<String> notes = new ArrayList<>();
            AdjustedPrevalence adjusted = RoganGladen.adjust(BinomialInterval.of(method, x, n, 0.95),
                    r.number(i, "se"), r.number(i, "sp"), notes::add);
            String what = x + "/" + n + " " + method;
            assertEquals(r.number(i, "value"), adjusted.value(), 1e-12, what);
            assertEquals(r.number(i, "lower"), adjusted.lower(), 1e-9, what);
            assertEquals(r.number(i, "upper"), adjusted.upper(), 1e-9, what);
            boolean clipped = Boolean.parseBoolean(r.text(i, "clipped"));
            assertEquals(clipped, adjusted.clipped(), what);
            assertEquals(clipped ? 1 : 0, notes.size(), what);
            clippedCases += clipped ? 1 : 0;
        }
        assertTrue(clippedCases >= 4 && clippedCases < r.size());
    }

    @Test
    void handWorkedValue() {
        // Source: hand calculation: 30/200 = 0.15 apparent, Se 0.9, Sp 0.95: (0.15 + 0.95 - 1) / 0.85 = 2/17.
        assertEquals(2.0 / 17, RoganGladen.unclipped(0.15, 0.9, 0.95), 1e-15);
    }

    @Test
    void perfectTestLeavesPrevalenceUnchanged() {
        BinomialInterval apparent = BinomialInterval.wilson(17, 90, 0.95);
        AdjustedPrevalence adjusted = RoganGladen.adjust(apparent, 1.0, 1.0, note -> { });
        assertEquals(apparent.estimate(), adjusted.value(), 1e-15);
        assertEquals(apparent.lower(), adjusted.lower(), 1e-15);
        assertEquals(apparent.upper(), adjusted.upper(), 1e-15);
    }

    @Test
    void rejectsTestsNoBetterThanChance() {
        BinomialInterval apparent = BinomialInterval.wilson(17, 90, 0.95);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> RoganGladen.adjust(apparent, 0.5, 0.5, note -> { }));
        assertTrue(e.getMessage().contains("sensitivity + specificity > 1"), e.getMessage());
        assertThrows(IllegalArgumentException.class, () -> RoganGladen.adjust(apparent, 1.2, 0.9, note -> { }));
        assertThrows(IllegalArgumentException.class, () -> RoganGladen.adjust(apparent, Double.NaN, 0.9, n -> { }));
    }

    @Test
    void emptyWindowGivesNullAdjustment() {
        AdjustedPrevalence adjusted = RoganGladen.adjust(BinomialInterval.wilson(0, 0, 0.95), 0.9, 0.95, n -> { });
        assertNull(adjusted.value());
        assertNull(adjusted.lower());
        assertNull(adjusted.upper());
    }
}
