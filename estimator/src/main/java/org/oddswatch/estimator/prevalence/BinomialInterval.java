package org.oddswatch.estimator.prevalence;

import java.util.Objects;

/**
 * A binomial proportion x / n with a two-sided confidence interval. Immutable; build with
 * {@link #wilson}, {@link #clopperPearson}, {@link #jeffreys} or {@link #of}.
 *
 * <p>With z the two-sided normal quantile and alpha = 1 - level:
 * <ul>
 *   <li><b>Wilson</b> (1927): {@code (p + z²/2n ± z·sqrt(p(1-p)/n + z²/4n²)) / (1 + z²/n)}; the same as
 *       R's {@code prop.test(x, n, correct = FALSE)}. Lower bound exactly 0 at x = 0, upper exactly 1
 *       at x = n (the formula gives these values; rounding is not allowed to move them).</li>
 *   <li><b>Clopper–Pearson</b> (1934): lower {@code Beta(alpha/2; x, n-x+1)}, upper
 *       {@code Beta(1-alpha/2; x+1, n-x)}; lower 0 at x = 0 and upper 1 at x = n. The same as R's
 *       {@code binom.test}.</li>
 *   <li><b>Jeffreys</b>: the equal-tailed quantiles of beta(x + 1/2, n - x + 1/2), with the boundary
 *       convention of Brown, Cai &amp; DasGupta (2001): lower 0 at x = 0, upper 1 at x = n.</li>
 * </ul>
 * Beta quantiles come from Commons Math's {@code BetaDistribution} (absolute accuracy 1e-14).
 *
 * <p>When n = 0 there is no proportion: {@link #estimate()}, {@link #lower()} and {@link #upper()}
 * are null (never NaN) and {@link #isDefined()} is false.
 */
public final class BinomialInterval {

    private final BinomialIntervalMethod method;
    private final long successes;
    private final long trials;
    private final double level;
    private final Double estimate;
    private final Double lower;
    private final Double upper;

    private BinomialInterval(BinomialIntervalMethod method, long successes, long trials, double level,
                             Double lower, Double upper) {
        this.method = method;
        this.successes = successes;
        this.trials = trials;
        this.level = level;
        this.estimate = trials == 0 ? null : (double) successes / trials;
        this.lower = lower;
        this.upper = upper;
    }

    /** Wilson score interval for {@code successes} out of {@code trials}. */
    public static BinomialInterval wilson(long successes, long trials, double level) {
        return of(BinomialIntervalMethod.WILSON, successes, trials, level);
    }

    /** Clopper–Pearson exact interval. */
    public static BinomialInterval clopperPearson(long successes, long trials, double level) {
        return of(BinomialIntervalMethod.CLOPPER_PEARSON, successes, trials, level);
    }

    /** Jeffreys interval. */
    public static BinomialInterval jeffreys(long successes, long trials, double level) {
        return of(BinomialIntervalMethod.JEFFREYS, successes, trials, level);
    }

    /**
     * The interval of the given method.
     *
     * @throws IllegalArgumentException unless {@code 0 <= successes <= trials} and {@code 0 < level < 1}
     */
    public static BinomialInterval of(BinomialIntervalMethod method, long successes, long trials, double level) {
        Objects.requireNonNull(method, "method");
        Quantiles.checkLevel(level);
        if (trials < 0 || successes < 0 || successes > trials) {
            throw new IllegalArgumentException(
                    "a binomial proportion needs 0 <= successes <= trials, got " + successes + " of " + trials);
        }
        if (trials == 0) {
            return new BinomialInterval(method, 0, 0, level, null, null);
        }
        double[] bounds = switch (method) {
            case WILSON -> wilsonBounds(successes, trials, level);
            case CLOPPER_PEARSON -> betaBounds(successes, trials, level,
                    successes, trials - successes + 1, successes + 1, trials - successes);
            case JEFFREYS -> betaBounds(successes, trials, level,
                    successes + 0.5, trials - successes + 0.5, successes + 0.5, trials - successes + 0.5);
        };
        return new BinomialInterval(method, successes, trials, level, bounds[0], bounds[1]);
    }

    private static double[] wilsonBounds(long x, long n, double level) {
        double z = Quantiles.twoSidedNormal(level);
        double p = (double) x / n;
        double z2n = z * z / n;
        double centre = (p + z2n / 2) / (1 + z2n);
        double half = z / (1 + z2n) * Math.sqrt(p * (1 - p) / n + z2n / (4.0 * n));
        double lo = x == 0 ? 0.0 : Math.max(0.0, centre - half);
        double hi = x == n ? 1.0 : Math.min(1.0, centre + half);
        return new double[] {lo, hi};
    }

    /**
     * Equal-tailed beta bounds: lower the alpha/2 quantile of beta(loA, loB) (0 when x = 0), upper the
     * 1 - alpha/2 quantile of beta(hiA, hiB) (1 when x = n).
     */
    private static double[] betaBounds(long x, long n, double level, double loA, double loB, double hiA,
                                       double hiB) {
        double tail = (1 - level) / 2;
        double lo = x == 0 ? 0.0 : Quantiles.beta(tail, loA, loB);
        double hi = x == n ? 1.0 : Quantiles.beta(1 - tail, hiA, hiB);
        return new double[] {lo, hi};
    }

    public BinomialIntervalMethod method() {
        return method;
    }

    public long successes() {
        return successes;
    }

    public long trials() {
        return trials;
    }

    public double level() {
        return level;
    }

    /** x / n, or null when n = 0. */
    public Double estimate() {
        return estimate;
    }

    /** Lower bound, or null when n = 0. */
    public Double lower() {
        return lower;
    }

    /** Upper bound, or null when n = 0. */
    public Double upper() {
        return upper;
    }

    /** Whether there is a proportion at all (n &gt; 0). */
    public boolean isDefined() {
        return trials > 0;
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof BinomialInterval other && method == other.method && successes == other.successes
                && trials == other.trials && Double.compare(level, other.level) == 0
                && Objects.equals(lower, other.lower) && Objects.equals(upper, other.upper);
    }

    @Override
    public int hashCode() {
        return Objects.hash(method, successes, trials, level, lower, upper);
    }

    @Override
    public String toString() {
        return successes + "/" + trials + " " + method + " " + level + ": [" + lower + ", " + upper + "]";
    }
}
