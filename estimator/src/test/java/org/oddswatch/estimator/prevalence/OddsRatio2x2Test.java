package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

class OddsRatio2x2Test {

    @Test
    void handCheckableTable() {
        // Source: hand calculation (Woolf 1955 formula). a=20, b=80, c=10, d=90: OR = 1800/800 = 2.25;
        // 1/20 + 1/80 + 1/10 + 1/90 = 125/720 = 25/144, so se(log OR) = 5/12; z(0.975) = 1.959963985.
        OddsRatioEstimate or = OddsRatio2x2.woolf(new TwoByTwoTable(20, 80, 10, 90), 0.95);
        assertEquals(2.25, or.oddsRatio(), 1e-14);
        assertEquals(5.0 / 12, or.logSe(), 1e-15);
        double z = 1.959963984540054;
        assertEquals(2.25 * Math.exp(-z * 5 / 12), or.lower(), 1e-12);
        assertEquals(2.25 * Math.exp(z * 5 / 12), or.upper(), 1e-12);
        assertFalse(or.corrected());
        assertTrue(or.notes().isEmpty());
        assertEquals("woolf", or.method());
    }

    @Test
    void agreesWithRIncludingHaldaneCorrectedTables() {
        // Source: woolf.csv from src/test/reference/tables_and_adjustment.R (R 4.2.2, formula evaluated in R).
        CsvFixture r = CsvFixture.load("/reference/woolf.csv");
        assertTrue(r.comments().get(0).contains("R version 4.2.2"));
        for (int i = 0; i < r.size(); i++) {
            TwoByTwoTable t = new TwoByTwoTable((long) r.number(i, "a"), (long) r.number(i, "b"),
                    (long) r.number(i, "c"), (long) r.number(i, "d"));
            OddsRatioEstimate or = OddsRatio2x2.woolf(t, r.number(i, "level"));
            assertEquals(r.number(i, "or"), or.oddsRatio(), 1e-12 * r.number(i, "or"), t.toString());
            assertEquals(r.number(i, "se"), or.logSe(), 1e-13, t.toString());
            assertEquals(r.number(i, "lower"), or.lower(), 1e-11 * r.number(i, "lower"), t.toString());
            assertEquals(r.number(i, "upper"), or.upper(), 1e-11 * r.number(i, "upper"), t.toString());
            assertEquals(t.hasZeroCell(), or.corrected());
            assertEquals(t.hasZeroCell() ? 1 : 0, or.notes().size());
        }
    }

    @Test
    void correctionOnlyWhenACellIsZero() {
        OddsRatioEstimate or = OddsRatio2x2.woolf(new TwoByTwoTable(0, 25, 6, 30), 0.95);
        assertTrue(or.corrected());
        assertTrue(or.notes().get(0).contains("Haldane"), or.notes().toString());
        // (0.5 * 30.5) / (25.5 * 6.5)
        assertEquals(0.5 * 30.5 / (25.5 * 6.5), or.oddsRatio(), 1e-14);
    }

    @Test
    void emptyRowOrColumnGivesNoEstimate() {
        OddsRatioEstimate or = OddsRatio2x2.woolf(new TwoByTwoTable(0, 0, 6, 30), 0.95);
        assertNull(or.oddsRatio());
        assertNull(or.lower());
        assertNull(or.upper());
        assertEquals(0, or.strataUsed());
        assertTrue(or.notes().get(0).contains("empty"));
    }

    @Test
    void rejectsNegativeCountsAndBadLevels() {
        assertThrows(IllegalArgumentException.class, () -> new TwoByTwoTable(1, -1, 2, 3));
        assertThrows(IllegalArgumentException.class, () -> OddsRatio2x2.woolf(new TwoByTwoTable(1, 1, 2, 3), 0));
    }
}
