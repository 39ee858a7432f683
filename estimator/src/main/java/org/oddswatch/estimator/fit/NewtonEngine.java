package org.oddswatch.estimator.fit;

import java.util.Arrays;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.linear.RealMatrix;

/**
 * Newton–Raphson iteration on a full-rank problem, optionally penalized (Firth) and optionally with
 * some coordinates held fixed (profile likelihood, likelihood-ratio tests).
 *
 * <p>Each iteration solves {@code I_ff d = g_f} over the free coordinates f, where g is the score
 * (Firth-modified when penalized), and computes the Newton decrement {@code lambda^2 = g_f' d =
 * g_f' I_ff^-1 g_f}: twice the gain the quadratic model predicts for the full step, and the squared
 * length of that step in standard-error units. It is unchanged by any rescaling or recentring of the
 * columns (an age in days or a calendar year like 2026 behaves as its centred, scaled version), and it
 * does not grow with the number of events. The iteration stops:
 * <ul>
 * <li>converged when {@code lambda^2 <= tolerance} ({@link FitControl});
 * <li>converged at the rounding floor when the predicted gain {@code lambda^2 / 2} is below the
 *     rounding level of the objective, {@code 1e-12 (|l| + 1)}, and the previous full Newton step,
 *     also taken below that level, did not lower {@code lambda^2}: the decrement is then itself rounding
 *     noise (this is how a problem with millions of events, whose summed objective cannot resolve the
 *     last digits, converges);
 * <li>not converged when no step length improves the objective beyond rounding while the predicted gain
 *     is above it, when the information matrix is singular, at the optional divergence stop (some
 *     |eta| beyond the limit while the last step lowered {@code lambda^2} by less than a factor 10), or
 *     at the iteration cap.
 * </ul>
 *
 * <p>Step length: the largest {@code t = 1, 1/2, 1/4, ...} (at most 30 halvings) whose objective is not
 * lower than the current one, so the objective never decreases beyond rounding; while the predicted
 * gain is below the rounding level the full step is accepted unless it lowers the objective by more
 * than that level (a comparison of two values equal to rounding would decide nothing). After
 * convergence one more Newton step (the polishing step) is taken, so that the result no longer depends
 * on the start in its last digits; constrained fits (profile and LR evaluations, which only need the
 * objective) skip it.
 *
 * <p>Firth fits differ in three ways, because their step {@code I^-1 U*} uses the information rather
 * than the curvature of the penalized objective and so converges only linearly: a trial whose objective
 * change is below the rounding level (which for {@code 0.5 log det I} grows with the conditioning of I,
 * see {@link #noise}) is decided by the sign of the slope {@code U*(beta + t d) . d}, and a negative
 * slope gives the next length by interpolation ({@link #secant}); convergence asks the remaining
 * distance {@code lambda^2 / (1 - rho)^2} ({@link #remaining}) to be below {@code 1e-4} of the tolerance;
 * and no polishing step is taken.
 */
final class NewtonEngine {

    private static final int MAX_HALVINGS = 30;
    /**
     * The divergence stop needs, besides some |eta| beyond the limit, a decrement that the last step
     * lowered by less than this factor: Newton steps along a separating direction raise the margin by
     * about one unit each and lower {@code lambda^2} by about {@code e^-1}, while a fit in the quadratic
     * region of a finite maximum (however large its |eta|, say from an uncentred year) lowers it by far more.
     */
    static final double DIVERGENCE_RATIO = 0.1;
    /**
     * Relative size of rounding noise in a summed objective: a trial that is lower by less than
     * {@code ROUNDING (|l| + 1)} counts as no change.
     */
    static final double ROUNDING = 1e-12;

    /**
     * Penalized fits: the largest change of any linear predictor a trial step may make, in log-odds. Along
     * a direction of (quasi-)separation far beyond the Firth estimate, the likelihood is flat while
     * {@code 0.5 log det I} still rises about linearly, so the Newton step from such a start (a diverged
     * maximum-likelihood iterate) is huge and would be halved many times, one pass over the rows each.
     */
    static final double MAX_PENALIZED_ETA_STEP = 5;

    private NewtonEngine() {
    }

    /**
     * The step length {@code t <= 1} at which a step d moves no linear predictor by more than
     * {@link #MAX_PENALIZED_ETA_STEP}. With a grouping, the bound {@code max_g |m_g . d| + sum_c |d_c| max|z_c|}
     * answers most steps without a pass over the rows.
     */
    static double cappedStepLength(FitProblem problem, IndicatorGroups groups, double[] d) {
        if (groups != null) {
            double bound = 0;
            for (int[] members : groups.members) {
                double s = 0;
                for (int j : members) {
                    s += d[j];
                }
                bound = Math.max(bound, Math.abs(s));
            }
            for (int c = 0; c < groups.q; c++) {
                bound += Math.abs(d[groups.numericColumns[c]]) * groups.maxAbsZ[c];
            }
            if (bound <= MAX_PENALIZED_ETA_STEP) {
                return 1;
            }
        }
        return Math.min(1, MAX_PENALIZED_ETA_STEP / maxAbsChange(problem, groups, d));
    }

    /** {@code max_i |x_i . d|} over the rows with trials: how far a step d moves the linear predictors. */
    static double maxAbsChange(FitProblem problem, IndicatorGroups groups, double[] d) {
        double[] trials = problem.trials();
        double max = 0;
        if (groups != null) {
            int q = groups.q;
            double[] byGroup = new double[groups.groupCount];
            for (int g = 0; g < groups.groupCount; g++) {
                for (int j : groups.members[g]) {
                    byGroup[g] += d[j];
                }
            }
            double[] dz = new double[q];
            for (int c = 0; c < q; c++) {
                dz[c] = d[groups.numericColumns[c]];
            }
            for (int i = 0; i < problem.rows(); i++) {
                double change = byGroup[groups.group[i]];
                for (int c = 0; c < q; c++) {
                    change += groups.z[i * q + c] * dz[c];
                }
                if (trials[i] != 0 && !(Math.abs(change) <= max)) {
                    max = Math.abs(change);
                }
            }
            return max;
        }
        int p = problem.columns();
        double[] x = problem.x();
        for (int i = 0; i < problem.rows(); i++) {
            double change = 0;
            for (int j = 0; j < p; j++) {
                change += x[i * p + j] * d[j];
            }
            if (trials[i] != 0 && !(Math.abs(change) <= max)) {
                max = Math.abs(change);
            }
        }
        return max;
    }

    static FitResult run(FitProblem problem, double[] start, boolean[] fixed, boolean penalized, FitControl control,
                         boolean warm) {
        return run(problem, IndicatorGroups.of(problem), start, fixed, penalized, control, warm);
    }

    static FitResult run(FitProblem problem, IndicatorGroups groups, double[] start, boolean[] fixed,
                         boolean penalized, FitControl control, boolean warm) {
        double[] trace = new double[control.maxIterations() + 1];
        BinomialPass current = evaluate(problem, groups, start.clone(), penalized, true);
        trace[0] = current.objective;
        int iterations = 0;
        if (current.objective == Double.NEGATIVE_INFINITY) {
            return result(problem, current, 0, new FitStop(FitStop.Reason.NON_FINITE_START, Double.NaN), warm,
                    penalized, fixed, trace, 1);
        }
        double previousDecrement = Double.POSITIVE_INFINITY;
        boolean previousBelowRounding = false;
        FitStop stop = null;
        double[] delta = null;
        while (true) {
            delta = step(current, fixed);
            if (delta == null) {
                stop = new FitStop(FitStop.Reason.SINGULAR_INFORMATION, Double.NaN);
                break;
            }
            double decrement = decrement(current, delta, fixed);
            if (penalized ? remaining(decrement, previousDecrement) <= FIRTH_TIGHTENING * control.tolerance()
                    : decrement <= control.tolerance()) {
                stop = new FitStop(FitStop.Reason.DECREMENT_BELOW_TOLERANCE, decrement);
                break;
            }
            double noise = noise(current, penalized);
            // The floor test compares the decrement with the rounding of the summed log-likelihood only: the
            // rounding of log det I (part of a penalized fit's noise) blurs objective comparisons, not the
            // score from which the decrement is computed.
            boolean belowRounding = decrement / 2 <= ROUNDING * (Math.abs(current.objective) + 1);
            // A Firth fit takes no polishing step, so at its floor it must also meet the tolerance itself.
            if (belowRounding && previousBelowRounding && decrement >= previousDecrement
                    && (!penalized || decrement <= control.tolerance())) {
                stop = new FitStop(FitStop.Reason.ROUNDING_FLOOR, decrement);
                break;
            }
            if (current.maxAbsEta > control.divergenceEta() && decrement > DIVERGENCE_RATIO * previousDecrement) {
                stop = new FitStop(FitStop.Reason.DIVERGING, decrement);
                break;
            }
            if (iterations == control.maxIterations()) {
                stop = new FitStop(FitStop.Reason.ITERATION_CAP, decrement);
                break;
            }
            BinomialPass accepted = null;
            double t = penalized ? cappedStepLength(problem, groups, delta) : 1;
            for (int h = 0; h <= MAX_HALVINGS; h++) {
                BinomialPass trial = evaluate(problem, groups, move(current.beta, delta, t), penalized, penalized);
                double fall = current.objective - trial.objective;
                if (fall <= 0 || !penalized && belowRounding && fall <= noise) {
                    accepted = trial;
                    break;
                }
                if (penalized && fall <= noise && trial.factor != null) {
                    // The comparison is rounding: the slope along the direction decides instead (below).
                    double slope = slope(trial, delta, fixed);
                    if (slope >= 0) {
                        accepted = trial;
                        break;
                    }
                    t = secant(t, decrement, slope);
                    continue;
                }
                if (fall <= noise) {
                    // Flat to rounding although the predicted gain is not: halving cannot help.
                    break;
                }
                t *= 0.5;
            }
            if (accepted == null) {
                stop = new FitStop(FitStop.Reason.NO_IMPROVEMENT, decrement);
                break;
            }
            iterations++;
            current = accepted;
            trace[iterations] = current.objective;
            previousDecrement = decrement;
            previousBelowRounding = belowRounding;
        }
        if (stop.converged() && fixed == null && !penalized) {
            current = polish(problem, groups, current, delta, penalized);
        }
        return result(problem, current, iterations, stop, warm, penalized, fixed, trace, iterations + 1);
    }

    /**
     * The rounding level of the objective at {@code pass}: {@code ROUNDING (|l| + 1)}, and for Firth's
     * penalized objective also the rounding of {@code 0.5 log det I}. An information matrix whose entries
     * carry relative errors up to {@code ROUNDING} (summed over rows; bounded by
     * {@code sqrt(I_jj I_kk)} by Cauchy–Schwarz) has its log-determinant moved by up to
     * {@code tr(I^-1 dI) <= ROUNDING sum_jk |(I^-1)_jk| sqrt(I_jj I_kk)}: at least p, and as large as the
     * condition of the correlation form of I allows. Uncentred columns (a calendar year next to the
     * intercept) make that sum large, and step-halving on a penalized objective noisier than
     * {@code ROUNDING (|l| + 1)} would stop at noise rather than at the maximum.
     */
    private static double noise(BinomialPass pass, boolean penalized) {
        double level = ROUNDING * (Math.abs(pass.objective) + 1);
        if (!penalized || pass.factor == null) {
            return level;
        }
        int p = pass.p;
        double[] inverse = DenseCholesky.inverse(pass.factor, p);
        double sum = 0;
        for (int j = 0; j < p; j++) {
            for (int k = 0; k < p; k++) {
                sum += Math.abs(inverse[j * p + k])
                        * Math.sqrt(pass.information[j * p + j] * pass.information[k * p + k]);
            }
        }
        return level + 0.5 * ROUNDING * sum;
    }

    /**
     * Firth fits stop at a squared remaining distance this many times smaller than the tolerance: they
     * take no polishing step (a full Firth step can overshoot, see {@link #secant}), so the iteration
     * itself goes the rest of the way, to within {@code 1e-8} standard errors at the default tolerance.
     */
    static final double FIRTH_TIGHTENING = 1e-4;

    /**
     * The squared distance to the maximum still to go, in the information's metric, for the linearly
     * converging Firth iteration: with the decrement contracting by {@code rho = lambda_k / lambda_{k-1}}
     * per step, the steps still to come sum to at most {@code lambda / (1 - rho)}; so
     * {@code lambda^2 / (1 - rho)^2}, infinite while the decrement does not contract. (Newton's quadratic
     * convergence needs no such factor.)
     */
    private static double remaining(double decrement, double previousDecrement) {
        double rho = Math.sqrt(decrement / previousDecrement);
        if (!(rho < 1)) {
            return Double.POSITIVE_INFINITY;
        }
        return decrement / ((1 - rho) * (1 - rho));
    }

    /**
     * The slope {@code g(beta + t d) . d} of the objective along the step direction at a trial point
     * (free coordinates; {@code d} is 0 on fixed ones). For Firth's penalized objective, whose values
     * carry the rounding of {@code log det I}, this decides a step once the objective change is below
     * rounding: along an ascent direction of a concave section a non-negative slope at t means the
     * objective at t is above its value at 0. The score is computed directly, not as a difference, so it
     * is accurate to its own relative rounding.
     */
    private static double slope(BinomialPass trial, double[] delta, boolean[] fixed) {
        double sum = 0;
        for (int j = 0; j < trial.p; j++) {
            if (fixed == null || !fixed[j]) {
                sum += trial.score[j] * delta[j];
            }
        }
        return sum;
    }

    /**
     * Where the slope along the direction reaches 0 by linear interpolation between {@code lambda^2} at
     * 0 and the (negative) {@code slope} at t: {@code t lambda^2 / (lambda^2 - slope)}, in (0, t). Firth's
     * step {@code I^-1 U*} uses the information, not the curvature of the penalized objective, and
     * overshoots where the penalty supplies most of that curvature (along a separating direction); the
     * interpolated length corrects the overshoot in one more evaluation where halving would need many.
     */
    private static double secant(double t, double decrement, double slope) {
        return t * decrement / (decrement - slope);
    }

    /** {@code lambda^2 = g_f' d}: the score times the Newton direction over the free coordinates. */
    private static double decrement(BinomialPass pass, double[] delta, boolean[] fixed) {
        return Math.max(slope(pass, delta, fixed), 0);
    }

    /** One more Newton step (the direction already computed at {@code current}), kept unless it lowers the objective. */
    private static BinomialPass polish(FitProblem problem, IndicatorGroups groups, BinomialPass current,
                                       double[] delta, boolean penalized) {
        BinomialPass polished = evaluate(problem, groups, move(current.beta, delta, 1), penalized, true);
        double slack = 1e-10 * (Math.abs(current.objective) + 1);
        return polished.objective >= current.objective - slack ? polished : current;
    }

    private static BinomialPass evaluate(FitProblem problem, IndicatorGroups groups, double[] beta, boolean penalized,
                                         boolean complete) {
        BinomialPass pass = BinomialPass.at(problem, groups, beta, penalized);
        if (complete) {
            finish(problem, groups, pass, penalized);
        }
        return pass;
    }

    private static void finish(FitProblem problem, IndicatorGroups groups, BinomialPass pass, boolean penalized) {
        if (penalized && pass.factor != null) {
            pass.addFirthCorrection(problem, groups);
        }
    }

    private static double[] move(double[] beta, double[] delta, double t) {
        double[] next = beta.clone();
        for (int j = 0; j < next.length; j++) {
            next[j] += t * delta[j];
        }
        return next;
    }

    /** The Newton direction over the free coordinates (0 on fixed ones), or null when I_ff is singular. */
    private static double[] step(BinomialPass pass, boolean[] fixed) {
        int p = pass.p;
        int[] free = freeIndices(p, fixed);
        int f = free.length;
        double[] delta = new double[p];
        if (f == 0) {
            return null;
        }
        double[] a = new double[f * f];
        double[] g = new double[f];
        for (int r = 0; r < f; r++) {
            g[r] = pass.score[free[r]];
            for (int c = 0; c < f; c++) {
                a[r * f + c] = pass.information[free[r] * p + free[c]];
            }
        }
        if (!DenseCholesky.decompose(a, f)) {
            return null;
        }
        DenseCholesky.solve(a, f, g);
        for (int r = 0; r < f; r++) {
            if (!Double.isFinite(g[r])) {
                return null;
            }
            delta[free[r]] = g[r];
        }
        return delta;
    }

    static int[] freeIndices(int p, boolean[] fixed) {
        int count = 0;
        for (int j = 0; j < p; j++) {
            if (fixed == null || !fixed[j]) {
                count++;
            }
        }
        int[] free = new int[count];
        for (int j = 0, r = 0; j < p; j++) {
            if (fixed == null || !fixed[j]) {
                free[r++] = j;
            }
        }
        return free;
    }

    private static FitResult result(FitProblem problem, BinomialPass pass, int iterations, FitStop stop,
                                    boolean warm, boolean penalized, boolean[] fixed, double[] trace, int traceLength) {
        double[][] covariance = fixed == null ? covariance(problem, pass) : null;
        return new FitResult(pass.beta.clone(), covariance, pass.logLikelihood, pass.objective, iterations, stop,
                warm, penalized ? FitMethod.FIRTH : FitMethod.NEWTON, new int[0], pass.maxScaledScore(fixed),
                pass.maxAbsEta, Arrays.copyOf(trace, traceLength), pass.score.clone());
    }

    /**
     * The inverse information at the pass's estimates: from the pass's information, or, when some column
     * lies far from zero relative to its spread (an uncentred year), from the information summed over
     * recoded columns and mapped back ({@link ColumnStandardization#covariance}), which keeps the digits
     * the raw sum loses to cancellation. Null when not positive definite.
     */
    static double[][] covariance(FitProblem problem, BinomialPass pass) {
        ColumnStandardization recoding = ColumnStandardization.of(problem);
        if (recoding.centresMatter()) {
            return recoding.covariance(problem, pass.beta);
        }
        return covariance(pass);
    }

    /** Inverse information by Commons Math's Cholesky decomposition, or null when not positive definite. */
    static double[][] covariance(BinomialPass pass) {
        int p = pass.p;
        double[][] info = new double[p][p];
        for (int j = 0; j < p; j++) {
            for (int k = 0; k < p; k++) {
                info[j][k] = pass.information[j * p + k];
            }
        }
        return inverse(info);
    }

    /** Inverse of a symmetric matrix by Commons Math's Cholesky decomposition, or null when not positive definite. */
    static double[][] inverse(double[][] info) {
        for (double[] row : info) {
            for (double v : row) {
                if (!Double.isFinite(v)) {
                    return null;
                }
            }
        }
        try {
            RealMatrix m = MatrixUtils.createRealMatrix(info);
            double[][] inverse = new CholeskyDecomposition(m, 1e-12, 1e-300).getSolver().getInverse().getData();
            for (double[] row : inverse) {
                for (double v : row) {
                    if (!Double.isFinite(v)) {
                        return null;
                    }
                }
            }
            return inverse;
        } catch (RuntimeException notPositiveDefinite) {
            return null;
        }
    }
}
