package org.oddswatch.deploy.detection;

import java.util.SplittableRandom;
import org.oddswatch.alerts.rules.CusumRunLength;

/**
 * The risk-adjusted Bernoulli CUSUM of the alert rules at a constant in-control risk {@code p}:
 * per event {@code W = y ln R − ln(1 − p + R p)}, {@code S = max(0, S + W)}, a signal when
 * {@code S > h}, starting from 0.
 *
 * <p>Computed: the alert rules' own Markov chain ({@link CusumRunLength#bernoulli}, Brook and Evans
 * 1972, Biometrika 59:539) on {@code cells} states; simulated: Bernoulli(p) outcomes through the
 * same recursion.
 */
record BernoulliCusumRunLength(double p, double multiplier, double h, int cells) implements InControlRunLength {

    @Override
    public String label() {
        return String.format(java.util.Locale.ROOT, "Bernoulli CUSUM, p %.4f, R %.4g, h %.1f", p, multiplier, h);
    }

    private double step(boolean positive) {
        return (positive ? Math.log(multiplier) : 0) - Math.log(1 - p + multiplier * p);
    }

    /** The alert rules' own chain ({@link CusumRunLength#bernoulli}) with one risk class, risk {@code p}. */
    @Override
    public double computed() {
        return CusumRunLength.bernoulli(h, multiplier, new double[] {1}, new double[] {p}, 1, cells);
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
