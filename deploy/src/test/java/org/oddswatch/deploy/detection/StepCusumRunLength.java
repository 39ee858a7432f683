package org.oddswatch.deploy.detection;

import java.util.Locale;
import java.util.SplittableRandom;
import org.oddswatch.alerts.rules.CusumRunLength;

/**
 * The two-sided normal CUSUM of the odds-ratio step rule in control: standardised step scores
 * {@code z ~ N(0, 1)}, {@code C+ = max(0, C+ + z - k)}, {@code C- = max(0, C- - z - k)}, a signal when
 * either exceeds {@code h}. Computed by the rule's own {@link CusumRunLength#normalTwoSided} (Brook and
 * Evans 1972, Biometrika 59:539; two sides combined as in Siegmund 1985); simulated with normal draws
 * through the same recursion. Run lengths are in window steps.
 */
record StepCusumRunLength(double k, double h) implements InControlRunLength {

    @Override
    public String label() {
        return String.format(Locale.ROOT, "odds-ratio step CUSUM (two-sided normal), k %.2f, h %.2f, in steps", k, h);
    }

    @Override
    public double computed() {
        return CusumRunLength.normalTwoSided(h, k, 0, CusumRunLength.BUDGET_GRID);
    }

    @Override
    public long simulateOnce(SplittableRandom rng) {
        double up = 0;
        double down = 0;
        long steps = 0;
        while (true) {
            steps++;
            double z = normal(rng);
            up = Math.max(0, up + z - k);
            down = Math.max(0, down - z - k);
            if (up > h || down > h) {
                return steps;
            }
        }
    }

    /** A standard normal draw by the Box–Muller transform. */
    private static double normal(SplittableRandom rng) {
        return Math.sqrt(-2 * Math.log(1 - rng.nextDouble())) * Math.cos(2 * Math.PI * rng.nextDouble());
    }
}
