package org.oddswatch.deploy.detection;

import java.util.SplittableRandom;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.ArrayRealVector;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.RealMatrix;

/**
 * The risk-adjusted Bernoulli CUSUM of the alert rules at a constant in-control risk {@code p}:
 * per event {@code W = y ln R − ln(1 − p + R p)}, {@code S = max(0, S + W)}, a signal when
 * {@code S > h}, starting from 0.
 *
 * <p>Computed: the Markov-chain approximation of Brook and Evans (1972, Biometrika 59:539) on a
 * lattice {@code S = jδ ≤ h}: δ is the smaller increment in absolute value divided by an integer k
 * (at least about {@code cells} states on [0, h]), so the frequent increment moves exactly k states;
 * a value between two states goes to both, split so that the mean step is exact (rounding would bias
 * every rare step the same way, and a cell-midpoint chain with a ceiling every small step by up to
 * one cell, which at p = 0.05 is as large as the in-control drift);
 * values at or below 0 go to state 0, values above h are a signal, and the average run length from 0
 * solves {@code (I − Q) L = 1}. Simulated: Bernoulli(p) outcomes through the same recursion.
 */
record BernoulliCusumRunLength(double p, double multiplier, double h, int cells) implements InControlRunLength {

    @Override
    public String label() {
        return String.format(java.util.Locale.ROOT, "Bernoulli CUSUM, p %.4f, R %.4g, h %.1f", p, multiplier, h);
    }

    private double step(boolean positive) {
        return (positive ? Math.log(multiplier) : 0) - Math.log(1 - p + multiplier * p);
    }

    @Override
    public double computed() {
        double up = step(true);
        double down = step(false);
        // The lattice: the frequent (small) increment is exactly k cells, the rare one rounded to the nearest cell.
        double frequent = Math.min(Math.abs(up), Math.abs(down));
        int k = Math.max(1, (int) Math.ceil(cells * frequent / h));
        double width = frequent / k;
        int n = (int) Math.floor(h / width) + 1; // states j = 0 .. n-1, the statistic at j * width <= h
        RealMatrix a = new Array2DRowRealMatrix(n, n);
        for (int i = 0; i < n; i++) {
            a.addToEntry(i, i, 1);
            for (boolean y : new boolean[] {true, false}) {
                double prob = y ? p : 1 - p;
                double next = i * width + (y ? up : down);
                if (next > h) {
                    continue; // absorbed: a signal
                }
                if (next <= 0) {
                    a.addToEntry(i, 0, -prob);
                    continue;
                }
                // Between two lattice points: split so that the mean step is exact.
                double x = next / width;
                long lo = (long) Math.floor(x + 1e-9);
                double upper = Math.max(0, x - lo);
                a.addToEntry(i, (int) Math.min(lo, n - 1), -prob * (1 - upper));
                if (upper > 1e-9 && lo + 1 < n) {
                    a.addToEntry(i, (int) (lo + 1), -prob * upper); // beyond the last point: a signal
                }
            }
        }
        double[] ones = new double[n];
        java.util.Arrays.fill(ones, 1);
        return new LUDecomposition(a).getSolver().solve(new ArrayRealVector(ones)).getEntry(0);
    }

    @Override
    public long simulateOnce(SplittableRandom rng) {
        double up = step(true);
        double down = step(false);
        double s = 0;
        long events = 0;
        while (true) {
            events++;
            s = Math.max(0, s + (rng.nextDouble() < p ? up : down));
            if (s > h) {
                return events;
            }
        }
    }
}
