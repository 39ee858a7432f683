package org.oddswatch.alerts.rules;

import org.apache.commons.math3.analysis.integration.gauss.GaussIntegrator;
import org.apache.commons.math3.analysis.integration.gauss.GaussIntegratorFactory;
import org.apache.commons.math3.distribution.NormalDistribution;

/**
 * Average run lengths of one-sided CUSUM charts by the Markov-chain method of Brook &amp; Evans (1972,
 * <i>Biometrika</i> 59:539): the interval [0, h] is cut into states, the chart's transition
 * probabilities between states are written down, and the ARL from state 0 solves
 * {@code (I - Q) L = 1}, Q being the transitions among non-absorbing states. Independent of the
 * chart code (it is the check of the charts' simulated run lengths in the tests), and the basis of
 * the limits the false-alarm budget derives ({@code engine.FalseAlarmBudget}). Pure: same arguments,
 * same answer.
 */
public final class CusumRunLength {

    /** Grid size the budget uses: within 0.5 % of the 400-state chain at the limits it solves for. */
    public static final int BUDGET_GRID = 150;

    private CusumRunLength() {
    }

    /**
     * Risk-adjusted Bernoulli CUSUM tuned to odds multiplier {@code r}, events drawn from risk
     * classes (probability {@code share[c]}, baseline risk {@code risk[c]}), true odds = baseline odds
     * times {@code trueMultiplier}. States are the grid points {@code i h / n}, i = 0..n; because the
     * increments are a few fixed values not on the grid, an increment landing between two grid
     * points is split between them in proportion to the distance, which keeps the mean drift exact
     * (plain rounding to the nearest point, the textbook variant, biases the drift).
     */
    public static double bernoulli(double h, double r, double[] share, double[] risk, double trueMultiplier, int n) {
        return solveFromZero(bernoulliTransitions(h, r, share, risk, trueMultiplier, n));
    }

    /** The transition matrix Q of {@link #bernoulli}, states 0..n. */
    static double[][] bernoulliTransitions(double h, double r, double[] share, double[] risk, double trueMultiplier,
                                           int n) {
        double w = h / n;
        double[][] q = new double[n + 1][n + 1];
        for (int i = 0; i <= n; i++) {
            double s = i * w;
            for (int c = 0; c < share.length; c++) {
                double p = risk[c];
                double odds = p / (1 - p) * trueMultiplier;
                double pTrue = odds / (1 + odds);
                for (int y = 0; y <= 1; y++) {
                    double prob = share[c] * (y == 1 ? pTrue : 1 - pTrue);
                    double inc = (y == 1 ? Math.log(r) : 0) - Math.log(1 - p + r * p);
                    double t = Math.max(0, s + inc);
                    if (t > h) {
                        continue;
                    }
                    double x = t / w;
                    int j = (int) Math.floor(x);
                    double f = x - j;
                    q[i][Math.min(j, n)] += prob * (1 - f);
                    if (f > 0) {
                        q[i][Math.min(j + 1, n)] += prob * f;
                    }
                }
            }
        }
        return q;
    }

    /**
     * One-sided normal-mean CUSUM {@code C = max(0, C + x - k)}, x ~ N(mu, 1), signal when C &gt; h;
     * the textbook discretisation: state 0 is [0, w/2), state j the interval of width w centred on
     * j w, with w = 2h / (2n - 1), transitions from the centre.
     */
    public static double normalOneSided(double h, double k, double mu, int n) {
        NormalDistribution z = new NormalDistribution(null, mu, 1.0);
        double w = 2 * h / (2 * n - 1);
        // the transitions depend on j - i only: cdf[m + n] = F((m + 0.5) w + k), m = -n .. n
        double[] cdf = new double[2 * n + 1];
        for (int m = -n; m <= n; m++) {
            cdf[m + n] = z.cumulativeProbability((m + 0.5) * w + k);
        }
        double[][] q = new double[n][n];
        for (int i = 0; i < n; i++) {
            q[i][0] = cdf[-i + n];
            for (int j = 1; j < n; j++) {
                q[i][j] = cdf[j - i + n] - cdf[j - i - 1 + n];
            }
        }
        return solveFromZero(q);
    }

    /** Two-sided ARL from the one-sided ones, 1/L = 1/L+ + 1/L- (exact enough when k &gt; 0, Siegmund 1985). */
    public static double normalTwoSided(double h, double k, double mu, int n) {
        return 1 / (1 / normalOneSided(h, k, mu, n) + 1 / normalOneSided(h, k, -mu, n));
    }

    /** Gauss–Hermite nodes for averaging over the baseline's error; within 0.1 % of 40 nodes at the budget's limits. */
    static final int ERROR_NODES = 16;

    /**
     * The two-sided normal CUSUM's run length averaged over an estimated baseline: the increments'
     * in-control mean is {@code s ~ N(0, tau²)}, fixed for the chart's life (the baseline's error),
     * and the result is the long-run mean spacing of false alarms over baselines,
     * <pre>
     *   L̄ = 1 / E_s[1 / L(h, k, s)],    1/L(s) = 1/L+(s) + 1/L+(-s)
     * </pre>
     * Because the chart restarts after each signal, a chart with mean {@code s} raises signals at
     * the long-run rate {@code 1 / L(s)} (renewal-reward theorem), so the expected number of false
     * alarms over {@code T} steps is {@code T · E_s[1/L(s)]}, not {@code T / L(0)}: by Jensen's
     * inequality and the fast fall of L with {@code |s|} the averaged rate is the larger, often
     * several times larger. The expectation is taken by Gauss–Hermite quadrature with
     * {@value #ERROR_NODES} nodes ({@code E f(s) = π^{-1/2} Σ w_i f(√2 τ x_i)}); the nodes are
     * symmetric, so {@code E[1/L] = 2 E[1/L+(s)]}. With {@code tau = 0} it equals
     * {@link #normalTwoSided}.
     */
    public static double normalTwoSidedOverError(double h, double k, double tau, int n) {
        if (!(tau > 0)) {
            return normalTwoSided(h, k, 0, n);
        }
        GaussIntegrator nodes = new GaussIntegratorFactory().hermite(ERROR_NODES);
        double rate = 0;
        for (int i = 0; i < nodes.getNumberOfPoints(); i++) {
            double s = Math.sqrt(2) * tau * nodes.getPoint(i);
            rate += nodes.getWeight(i) * 2 / normalOneSided(h, k, s, n);
        }
        return Math.sqrt(Math.PI) / rate;
    }

    /** The smallest h (to 1e-4) with {@link #normalTwoSidedOverError} at least {@code target}. */
    public static double normalTwoSidedLimitOverError(double target, double k, double tau) {
        return smallestLimit(h -> normalTwoSidedOverError(h, k, tau, BUDGET_GRID), target, 0.5, 1e-4);
    }

    /**
     * The smallest decision limit h (to 1e-4) whose two-sided normal CUSUM, reference value
     * {@code k}, has an average run length of at least {@code target} steps when the standardised
     * increments have mean {@code mu}. The ARL grows with h, so h is bracketed by doubling from 0.5
     * and then bisected.
     *
     * @throws IllegalArgumentException when {@code target} is not above 1
     */
    public static double normalTwoSidedLimit(double target, double k, double mu) {
        return smallestLimit(h -> normalTwoSided(h, k, mu, BUDGET_GRID), target, 0.5, 1e-4);
    }

    /**
     * The smallest decision limit whose run length {@code runLength(h)} (growing with h) reaches
     * {@code target}: bracketed by doubling from {@code start}, then bisected to {@code tolerance}.
     *
     * @throws IllegalArgumentException when {@code target} is not a finite number above 1, or no
     *     limit up to 256 reaches it
     */
    public static double smallestLimit(java.util.function.DoubleUnaryOperator runLength, double target, double start,
                                       double tolerance) {
        if (!(target > 1) || Double.isInfinite(target)) {
            throw new IllegalArgumentException("target run length must be finite and above 1: " + target);
        }
        double lo = 0;
        double hi = start;
        while (runLength.applyAsDouble(hi) < target) {
            lo = hi;
            hi *= 2;
            if (hi > 256) {
                throw new IllegalArgumentException("no limit up to 256 reaches run length " + target);
            }
        }
        while (hi - lo > tolerance) {
            double mid = (lo + hi) / 2;
            if (runLength.applyAsDouble(mid) < target) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        return hi;
    }

    /**
     * {@code max(smallestLimit(first, ...), smallestLimit(second, ...))}, solving for the second
     * limit only when it is the larger. Why the result is the same: the doubling brackets h by
     * multiples {@code start · 2^m} and the bisection then halves the bracket to {@code tolerance},
     * so every point it tries, and the limit it returns, lies on one grid, the multiples of
     * {@code start · 2^-K} with K the least integer making that at most {@code tolerance}, whatever
     * the bracket; with a run length growing in h (which the bisection assumes), the limit is the
     * smallest grid point reaching {@code target}. So when {@code second} already reaches the target
     * at the first limit, its own limit is no larger and the maximum is the first limit; otherwise it
     * is the second limit, solved as usual (and it throws as usual). One run length instead of a
     * whole search: the false-alarm budget solves each stream's limits once, at its start.
     *
     * @throws IllegalArgumentException as {@link #smallestLimit} for either
     */
    public static double largerLimit(java.util.function.DoubleUnaryOperator first,
                                     java.util.function.DoubleUnaryOperator second, double target, double start,
                                     double tolerance) {
        double h = smallestLimit(first, target, start, tolerance);
        return second.applyAsDouble(h) >= target ? h : smallestLimit(second, target, start, tolerance);
    }

    /**
     * L_0 of (I - Q) L = 1 by Gaussian elimination with partial pivoting. A row operation runs only
     * up to the last column where the pivot row can be non-zero (and the right-hand side): the
     * Bernoulli chains are banded (an event moves the chart by one of a few fixed steps), so most of
     * each row is exactly zero, and subtracting {@code f · 0} from an entry leaves it as it was. The
     * result is the plain elimination's to the last bit (a non-finite {@code f}, from a singular
     * matrix, takes the whole row as the plain elimination does); dense chains (the normal ones) run
     * the whole row as before.
     */
    static double solveFromZero(double[][] q) {
        return solveFromZero(q, true);
    }

    /** {@link #solveFromZero(double[][])}, with row operations over whole rows when {@code banded} is false (the plain elimination). */
    static double solveFromZero(double[][] q, boolean banded) {
        int n = q.length;
        double[][] a = new double[n][n + 1];
        // last[i]: the last column (< n) of row i that may be non-zero; beyond it the row is exactly 0
        int[] last = new int[n];
        for (int i = 0; i < n; i++) {
            last[i] = -1;
            for (int j = 0; j < n; j++) {
                a[i][j] = (i == j ? 1 : 0) - q[i][j];
                if (a[i][j] != 0) {
                    last[i] = j;
                }
            }
            a[i][n] = 1;
        }
        for (int col = 0; col < n; col++) {
            int piv = col;
            for (int i = col + 1; i < n; i++) {
                if (Math.abs(a[i][col]) > Math.abs(a[piv][col])) {
                    piv = i;
                }
            }
            double[] tmp = a[col];
            a[col] = a[piv];
            a[piv] = tmp;
            int tmpLast = last[col];
            last[col] = last[piv];
            last[piv] = tmpLast;
            double d = a[col][col];
            for (int i = col + 1; i < n; i++) {
                double f = a[i][col] / d;
                if (f != 0) {
                    double[] ri = a[i];
                    double[] rc = a[col];
                    int end = banded && Double.isFinite(f) ? last[col] : n - 1;
                    for (int j = col; j <= end; j++) {
                        ri[j] -= f * rc[j];
                    }
                    ri[n] -= f * rc[n];
                    last[i] = Math.max(last[i], end);
                }
            }
        }
        double[] x = new double[n];
        for (int i = n - 1; i >= 0; i--) {
            double s = a[i][n];
            for (int j = i + 1; j < n; j++) {
                s -= a[i][j] * x[j];
            }
            x[i] = s / a[i][i];
        }
        return x[0];
    }
}
