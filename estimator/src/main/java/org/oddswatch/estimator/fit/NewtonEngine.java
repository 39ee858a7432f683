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
 * (Firth-modified when penalized), and accepts {@code beta + t d} for the largest
 * {@code t = 1, 1/2, 1/4, ...} (at most 30 halvings) whose objective is not lower than the current
 * one; so the objective never decreases across accepted iterations. When a trial is lower only by
 * rounding noise (relative 1e-12) halving stops, and the fit has converged if the score is small. After convergence one more
 * Newton step (the polishing step) is taken, so that the result no longer depends on the start in
 * its last digits; constrained fits (profile and LR evaluations, which only need the objective)
 * skip it.
 */
final class NewtonEngine {

    private static final int MAX_HALVINGS = 30;
    /**
     * Relative size of rounding noise in a summed objective: a trial that is lower by less than
     * {@code ROUNDING (|l| + 1)} counts as no change, which ends step-halving at once.
     */
    private static final double ROUNDING = 1e-12;

    private NewtonEngine() {
    }

    static FitResult run(FitProblem problem, double[] start, boolean[] fixed, boolean penalized, FitControl control,
                         boolean warm) {
        return run(problem, IndicatorGroups.of(problem), start, fixed, penalized, control, warm);
    }

    static FitResult run(FitProblem problem, IndicatorGroups groups, double[] start, boolean[] fixed,
                         boolean penalized, FitControl control, boolean warm) {
        final int p = problem.columns();
        double[] trace = new double[control.maxIterations() + 1];
        BinomialPass current = evaluate(problem, groups, start.clone(), penalized, true);
        trace[0] = current.objective;
        int iterations = 0;
        boolean converged = false;
        if (current.objective == Double.NEGATIVE_INFINITY) {
            return result(problem, current, 0, false, warm, penalized, fixed, trace, 1);
        }
        while (iterations < control.maxIterations()) {
            double[] delta = step(current, fixed);
            if (delta == null) {
                break;
            }
            BinomialPass accepted = null;
            double t = 1;
            double noise = ROUNDING * (Math.abs(current.objective) + 1);
            for (int h = 0; h <= MAX_HALVINGS; h++, t *= 0.5) {
                BinomialPass trial = evaluate(problem, groups, move(current.beta, delta, t), penalized, false);
                if (trial.objective >= current.objective) {
                    accepted = trial;
                    break;
                }
                if (current.objective - trial.objective <= noise) {
                    // Flat to rounding: halving cannot help (and each halving costs a pass).
                    break;
                }
            }
            if (accepted == null) {
                converged = current.maxScaledScore(fixed) < FitControl.SCORE_TOLERANCE;
                break;
            }
            finish(problem, accepted, penalized);
            iterations++;
            double change = Math.abs(accepted.objective - current.objective) / (Math.abs(accepted.objective) + 0.1);
            current = accepted;
            trace[iterations] = current.objective;
            if (change < control.tolerance() && current.maxScaledScore(fixed) < FitControl.SCORE_TOLERANCE) {
                converged = true;
                break;
            }
        }
        if (converged && fixed == null) {
            current = polish(problem, groups, current, fixed, penalized);
        }
        return result(problem, current, iterations, converged, warm, penalized, fixed, trace, iterations + 1);
    }

    private static BinomialPass polish(FitProblem problem, IndicatorGroups groups, BinomialPass current,
                                       boolean[] fixed, boolean penalized) {
        double[] delta = step(current, fixed);
        if (delta == null) {
            return current;
        }
        BinomialPass polished = evaluate(problem, groups, move(current.beta, delta, 1), penalized, true);
        double slack = 1e-10 * (Math.abs(current.objective) + 1);
        return polished.objective >= current.objective - slack ? polished : current;
    }

    private static BinomialPass evaluate(FitProblem problem, IndicatorGroups groups, double[] beta, boolean penalized,
                                         boolean complete) {
        BinomialPass pass = BinomialPass.at(problem, groups, beta, penalized);
        if (complete) {
            finish(problem, pass, penalized);
        }
        return pass;
    }

    private static void finish(FitProblem problem, BinomialPass pass, boolean penalized) {
        if (penalized && pass.factor != null) {
            pass.addFirthCorrection(problem);
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

    private static FitResult result(FitProblem problem, BinomialPass pass, int iterations, boolean converged,
                                    boolean warm, boolean penalized, boolean[] fixed, double[] trace, int traceLength) {
        double[][] covariance = fixed == null ? covariance(pass) : null;
        return new FitResult(pass.beta.clone(), covariance, pass.logLikelihood, pass.objective, iterations, converged,
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
