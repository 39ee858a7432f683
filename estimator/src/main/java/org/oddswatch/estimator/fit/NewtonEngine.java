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
 *     is above it, when the information matrix is singular, at the optional divergence stop, or at the
 *     iteration cap.
 * </ul>
 *
 * <p>Step length: the largest {@code t = 1, 1/2, 1/4, ...} (at most 30 halvings) whose objective is not
 * lower than the current one, so the objective never decreases beyond rounding; while the predicted
 * gain is below the rounding level the full step is accepted unless it lowers the objective by more
 * than that level (a comparison of two values equal to rounding would decide nothing). After
 * convergence one more Newton step (the polishing step) is taken, so that the result no longer depends
 * on the start in its last digits; constrained fits (profile and LR evaluations, which only need the
 * objective) skip it.
 */
final class NewtonEngine {

    private static final int MAX_HALVINGS = 30;
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
            if (decrement <= control.tolerance()) {
                stop = new FitStop(FitStop.Reason.DECREMENT_BELOW_TOLERANCE, decrement);
                break;
            }
            double noise = ROUNDING * (Math.abs(current.objective) + 1);
            boolean belowRounding = decrement / 2 <= noise;
            if (belowRounding && previousBelowRounding && decrement >= previousDecrement) {
                stop = new FitStop(FitStop.Reason.ROUNDING_FLOOR, decrement);
                break;
            }
            if (current.maxAbsEta > control.divergenceEta()) {
                stop = new FitStop(FitStop.Reason.DIVERGING, decrement);
                break;
            }
            if (iterations == control.maxIterations()) {
                stop = new FitStop(FitStop.Reason.ITERATION_CAP, decrement);
                break;
            }
            BinomialPass accepted = null;
            double t = penalized ? cappedStepLength(problem, groups, delta) : 1;
            for (int h = 0; h <= MAX_HALVINGS; h++, t *= 0.5) {
                BinomialPass trial = evaluate(problem, groups, move(current.beta, delta, t), penalized, false);
                double fall = current.objective - trial.objective;
                if (fall <= 0 || belowRounding && fall <= noise) {
                    accepted = trial;
                    break;
                }
                if (fall <= noise) {
                    // Flat to rounding although the predicted gain is not: halving cannot help.
                    break;
                }
            }
            if (accepted == null) {
                stop = new FitStop(FitStop.Reason.NO_IMPROVEMENT, decrement);
                break;
            }
            finish(problem, groups, accepted, penalized);
            iterations++;
            current = accepted;
            trace[iterations] = current.objective;
            previousDecrement = decrement;
            previousBelowRounding = belowRounding;
        }
        if (stop.converged() && fixed == null) {
            current = polish(problem, groups, current, delta, penalized);
        }
        return result(problem, current, iterations, stop, warm, penalized, fixed, trace, iterations + 1);
    }

    /** {@code lambda^2 = g_f' d}: the score times the Newton direction over the free coordinates. */
    private static double decrement(BinomialPass pass, double[] delta, boolean[] fixed) {
        double sum = 0;
        for (int j = 0; j < pass.p; j++) {
            if (fixed == null || !fixed[j]) {
                sum += pass.score[j] * delta[j];
            }
        }
        return Math.max(sum, 0);
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
        double[][] covariance = fixed == null ? covariance(pass) : null;
        return new FitResult(pass.beta.clone(), covariance, pass.logLikelihood, pass.objective, iterations, stop,
                warm, penalized ? FitMethod.FIRTH : FitMethod.NEWTON, new int[0], pass.maxScaledScore(fixed),
                pass.maxAbsEta, Arrays.copyOf(trace, traceLength), pass.score.clone());
    }

    /** Inverse information by Commons Math's Cholesky decomposition, or null when not positive definite. */
    static double[][] covariance(BinomialPass pass) {
        int p = pass.p;
        double[][] info = new double[p][p];
        for (int j = 0; j < p; j++) {
            for (int k = 0; k < p; k++) {
                info[j][k] = pass.information[j * p + k];
                if (!Double.isFinite(info[j][k])) {
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
