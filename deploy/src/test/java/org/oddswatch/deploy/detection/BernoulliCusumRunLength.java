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
 * (at least about {@code cells} states on [0, h]), so the frequent increment moves exactly k states
 * and only the rare one is rounded to the nearest state (a cell-midpoint chain with a ceiling would
 * bias every small step by up to one cell, which at p = 0.05 is as large as the in-control drift);
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
                double next = i * width + (y ? up : down);
                long j = next <= 0 ? 0 : Math.round(next / width);
                if (next > h || j >= n) {
                    continue; // absorbed: a signal
                }
                a.addToEntry(i, (int) j, -(y ? p : 1 - p));
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
