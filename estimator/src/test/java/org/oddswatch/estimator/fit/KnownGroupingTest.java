package org.oddswatch.estimator.fit;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;

import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.HouseScenario;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.window.WindowData;
import org.oddswatch.estimator.window.WindowStore;

/** The grouping the window store attaches equals the one the fitter derives from the dense design. */
class KnownGroupingTest {

    @Test
    void storeGroupingEqualsTheDerivedOne() {
        DesignCoder coder = HouseScenario.coder(true);
        WindowStore store = new WindowStore(coder, 64, 4);
        HouseScenario scenario = new HouseScenario(7, true, 0.05);
        double[] row = new double[coder.width()];
        int[] perBucket = {3000, 40, 2500};   // row mode, pattern mode, row mode
        for (int b = 0; b < perBucket.length; b++) {
            for (int k = 0; k < perBucket[b]; k++) {
                HouseScenario.add(coder, store, b, scenario.next(), row);
            }
        }
        WindowData data = store.window(0, 3);
        FitProblem problem = FitProblem.of(data.rows(), data.columns(), data.x(), data.trials(), data.positives());
        IndicatorGroups attached = KnownGrouping.of(problem);
        assertNotNull(attached);
        IndicatorGroups derived = IndicatorGroups.derive(problem);
        assertEquals(derived.q, attached.q);
        assertEquals(derived.groupCount, attached.groupCount);
        assertArrayEquals(derived.numericColumns, attached.numericColumns);
        assertArrayEquals(derived.group, attached.group);
        assertArrayEquals(derived.z, attached.z);
        assertArrayEquals(derived.members, attached.members);
        assertArrayEquals(derived.weightedCrossProduct(problem), attached.weightedCrossProduct(problem));
        // Another problem on copies of the arrays gets no attached grouping.
        FitProblem copy = FitProblem.of(data.rows(), data.columns(), data.x().clone(), data.trials(), data.positives());
        assertNull(KnownGrouping.of(copy));
    }

    @Test
    void numericColumnHoldingOnlyZeroAndOneIsLeftToTheFitter() {
        DesignCoder coder = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new NumericTerm("visits", 1, false)));
        WindowStore store = new WindowStore(coder, 0, 0);
        double[] row = new double[coder.width()];
        for (int k = 0; k < 5000; k++) {
            coder.code(new Object[] {k % 3 == 0 ? "yes" : "no", (double) (k % 2)}, row);
            store.add(0, row, k % 5 == 0, -1);
        }
        WindowData data = store.window(0, 1);
        FitProblem problem = FitProblem.of(data.rows(), data.columns(), data.x(), data.trials(), data.positives());
        assertNull(KnownGrouping.of(problem));
        assertEquals(0, IndicatorGroups.of(problem).q, "the fitter counts the 0/1 numeric column as binary");
    }
}
