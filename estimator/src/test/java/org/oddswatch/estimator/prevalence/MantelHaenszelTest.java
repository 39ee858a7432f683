package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

class MantelHaenszelTest {

    private static final CsvFixture STRATA = CsvFixture.load("/reference/mantel-haenszel-strata.csv");
    private static final CsvFixture EXPECTED = CsvFixture.load("/reference/mantel-haenszel.csv");

    @Test
    void berkeleyAdmissionsByDepartment() {
        // Source: docs/references.md, Bickel, Hammel & O'Connell 1975 (Science 187:398) data as R's
        // datasets::UCBAdmissions; R mantelhaen.test(UCBAdmissions): 0.9047, 95% 0.7719-1.0603 (RBG).
        OddsRatioEstimate mh = MantelHaenszel.commonOddsRatio(strata("ucb"), 0.95);
        assertEquals(0.9047, mh.oddsRatio(), 5e-5);
        assertEquals(0.7719, mh.lower(), 5e-5);
        assertEquals(1.0603, mh.upper(), 5e-5);
        assertEquals(6, mh.strata());
        assertEquals(6, mh.strataUsed());
        assertTrue(mh.notes().isEmpty());
        assertEquals("mantel-haenszel", mh.method());
    }

    @Test
    void agreesWithRMantelhaenTestToFullPrecision() {
        // Source: mantel-haenszel.csv from src/test/reference/tables_and_adjustment.R (R 4.2.2 mantelhaen.test);
        // includes an invented sparse case with zero cells and one stratum with ad = bc = 0.
        assertTrue(EXPECTED.comments().get(0).contains("R version 4.2.2"));
        for (int i = 0; i < EXPECTED.size(); i++) {
            String name = EXPECTED.text(i, "case");
            double level = EXPECTED.number(i, "level");
            OddsRatioEstimate mh = MantelHaenszel.commonOddsRatio(strata(name), level);
            assertEquals(EXPECTED.number(i, "or"), mh.oddsRatio(), 1e-12, name);
            assertEquals(EXPECTED.number(i, "lower"), mh.lower(), 1e-10, name);
            assertEquals(EXPECTED.number(i, "upper"), mh.upper(), 1e-10, name);
        }
    }

    @Test
    void strataWithoutInformationAreSkippedAndNoted() {
        OddsRatioEstimate mh = MantelHaenszel.commonOddsRatio(strata("sparse"), 0.95);
        assertEquals(4, mh.strata());
        assertEquals(3, mh.strataUsed());
        assertTrue(mh.notes().get(0).startsWith("1 of 4 strata"), mh.notes().toString());
    }

    @Test
    void emptyAndOneSidedStrataGiveNullsNotNaN() {
        OddsRatioEstimate none = MantelHaenszel.commonOddsRatio(List.of(), 0.95);
        assertNull(none.oddsRatio());
        OddsRatioEstimate empty = MantelHaenszel.commonOddsRatio(List.of(new TwoByTwoTable(0, 0, 0, 0)), 0.95);
        assertNull(empty.oddsRatio());
        assertNull(empty.lower());
        // Every informative stratum has bc = 0: the common odds ratio is infinite, so not reported.
        OddsRatioEstimate infinite = MantelHaenszel.commonOddsRatio(
                List.of(new TwoByTwoTable(4, 0, 3, 5), new TwoByTwoTable(2, 3, 0, 6)), 0.95);
        assertNull(infinite.oddsRatio());
        assertNull(infinite.logSe());
        assertTrue(infinite.notes().get(infinite.notes().size() - 1).contains("infinite"));
    }

    @Test
    void singleStratumEqualsTheCrudeOddsRatio() {
        // Source: with one stratum, R/S = (ad/n)/(bc/n) = ad/bc (Mantel & Haenszel 1959; algebra, no source).
        TwoByTwoTable t = new TwoByTwoTable(20, 80, 10, 90);
        assertEquals(2.25, MantelHaenszel.commonOddsRatio(List.of(t), 0.95).oddsRatio(), 1e-12);
    }

    static List<TwoByTwoTable> strata(String name) {
        List<TwoByTwoTable> tables = new ArrayList<>();
        for (int i = 0; i < STRATA.size(); i++) {
            if (STRATA.text(i, "case").equals(name)) {
                tables.add(new TwoByTwoTable((long) STRATA.number(i, "a"), (long) STRATA.number(i, "b"),
                        (long) STRATA.number(i, "c"), (long) STRATA.number(i, "d")));
            }
        }
        return tables;
    }
}
