package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** Two-sided tabular CUSUM run lengths against the published table and the Brook–Evans chain. */
class NormalCusumTest {

    private static double simulatedArl(double h, double shift, int runs, long seed, double[] seOut) {
        SplittableRandom rng = new SplittableRandom(seed);
        double sum = 0;
        double sumSq = 0;
        for (int r = 0; r < runs; r++) {
            NormalCusum chart = new NormalCusum(0, 1, 0.5, h);
            long n = 0;
            do {
                n++;
            } while (chart.add(shift + rng.nextGaussian()) == NormalCusum.Signal.NONE);
            sum += n;
            sumSq += (double) n * n;
        }
        double mean = sum / runs;
        seOut[0] = Math.sqrt((sumSq / runs - mean * mean) / (runs - 1));
        return mean;
    }

    @Test
    void markovChainReproducesThePublishedTable() {
        // Source: Montgomery, Introduction to Statistical Quality Control, tabular CUSUM ARL table, k = 0.5
        // (from memory; see docs/references.md); method: Brook & Evans 1972. Table values are rounded.
        assertEquals(168, BrookEvans.normalTwoSided(4, 0.5, 0, 400), 168 * 0.01);
        assertEquals(8.38, BrookEvans.normalTwoSided(4, 0.5, 1, 400), 0.05);
        assertEquals(465, BrookEvans.normalTwoSided(5, 0.5, 0, 400), 465 * 0.01);
        assertEquals(10.4, BrookEvans.normalTwoSided(5, 0.5, 1, 400), 0.06);
    }

    @Test
    void chartCodeMatchesThePublishedTableBySimulation() {
        // Source: Montgomery (from memory; docs/references.md). Tolerance: 4 simulation standard errors
        // plus the Siegmund-type approximation of combining the two one-sided charts (about 1%).
        double[] se = new double[1];
        double arl0h4 = simulatedArl(4, 0, 4000, 11L, se);
        assertEquals(168, arl0h4, 4 * se[0] + 2, "h=4 in control");
        double arl1h4 = simulatedArl(4, 1, 4000, 12L, se);
        assertEquals(8.38, arl1h4, 4 * se[0] + 0.1, "h=4 one sigma");
        double arl0h5 = simulatedArl(5, 0, 2000, 13L, se);
        assertEquals(465, arl0h5, 4 * se[0] + 5, "h=5 in control");
        double arl1h5 = simulatedArl(5, 1, 4000, 14L, se);
        assertEquals(10.4, arl1h5, 4 * se[0] + 0.1, "h=5 one sigma");
    }

    @Test
    void signalsNameTheSideAndRestartBothSides() {
        NormalCusum c = new NormalCusum(10, 2, 0.5, 4);
        assertEquals(NormalCusum.Signal.NONE, c.add(14)); // x = 2 -> C+ = 1.5
        assertEquals(1.5, c.upperValue(), 1e-12);
        assertEquals(NormalCusum.Signal.NONE, c.add(16)); // x = 3 -> 4.0, not above h
        assertEquals(NormalCusum.Signal.UP, c.add(12)); // x = 1 -> 4.5 > 4
        assertEquals(0.0, c.upperValue());
        assertEquals(0.0, c.lowerValue());
        assertEquals(NormalCusum.Signal.DOWN, c.add(0)); // x = -5 -> C- = 0 + 5 - 0.5 = 4.5 > 4
    }
}
