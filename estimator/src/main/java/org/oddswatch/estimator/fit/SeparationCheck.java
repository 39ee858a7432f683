package org.oddswatch.estimator.fit;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.exception.MathIllegalStateException;
import org.apache.commons.math3.optim.MaxIter;
import org.apache.commons.math3.optim.PointValuePair;
import org.apache.commons.math3.optim.linear.LinearConstraint;
import org.apache.commons.math3.optim.linear.LinearConstraintSet;
import org.apache.commons.math3.optim.linear.LinearObjectiveFunction;
import org.apache.commons.math3.optim.linear.NonNegativeConstraint;
import org.apache.commons.math3.optim.linear.Relationship;
import org.apache.commons.math3.optim.linear.SimplexSolver;
import org.apache.commons.math3.optim.nonlinear.scalar.GoalType;

/**
 * Detects complete or quasi-complete separation (Albert &amp; Anderson 1984) of a full-rank design.
 *
 * <p>Criterion: the maximum-likelihood estimate fails to exist exactly when some direction
 * {@code b != 0} has {@code x_i . b >= 0} for every point with a positive and {@code x_i . b <= 0}
 * for every point with a negative, with at least one inequality strict (a grouped row with both
 * outcomes contributes both points, forcing {@code x_i . b = 0}). This is decided by the linear
 * programme (Konis 2007) maximise {@code sum_i s_i x_i . b} subject to {@code s_i x_i . b >= 0} and
 * {@code -1 <= b_j <= 1}, solved with Commons Math's simplex solver: separation iff the optimum is
 * positive. The columns with non-zero {@code b_j} are the ones involved.
 *
 * <p>The programme has one constraint per point; above {@link #MAX_POINTS} points (row storage of a
 * large window) it is not run and {@link #heuristic} decides instead: a Newton fit that did not
 * converge, or converged with some linear predictor beyond {@code +-15} (fitted probability within
 * 3e-7 of 0 or 1), counts as separated. That heuristic is what general-purpose GLM routines warn on,
 * and it can misfire on extreme numeric covariates.
 */
public final class SeparationCheck {

    /** Largest number of (pattern, outcome) points the linear programme is run on. */
    public static final int MAX_POINTS = 4000;
    /** |eta| beyond which a fitted probability counts as numerically 0 or 1. */
    public static final double EXTREME_ETA = 15;

    private static final double POSITIVE = 1e-7;

    private SeparationCheck() {
    }

    /** The check's answer. */
    public enum Verdict { NONE, SEPARATED, UNDECIDED }

    /**
     * @param verdict NONE, SEPARATED, or UNDECIDED when there were too many points for the programme
     * @param involved columns with a non-zero component in the separating direction (empty unless separated)
     */
    public record Outcome(Verdict verdict, int[] involved) {
    }

    /** Whether a Newton fit shows the symptoms that call for the exact check. */
    public static boolean suspicious(FitResult fit) {
        return !fit.converged() || fit.maxAbsLinearPredictor() > EXTREME_ETA;
    }

    /** The fallback decision for designs too large for the programme. */
    public static boolean heuristic(FitResult fit) {
        return suspicious(fit);
    }

    /** Runs the linear programme on a full-rank problem (offsets are ignored). */
    public static Outcome check(FitProblem problem) {
        int p = problem.columns();
        double[] x = problem.x();
        List<double[]> points = new ArrayList<>();
        for (int i = 0; i < problem.rows(); i++) {
            double t = problem.trials()[i];
            double y = problem.positives()[i];
            if (t == 0) {
                continue;
            }
            if (y > 0) {
                points.add(signed(x, i, p, 1));
            }
            if (t - y > 0) {
                points.add(signed(x, i, p, -1));
            }
            if (points.size() > MAX_POINTS) {
                return new Outcome(Verdict.UNDECIDED, new int[0]);
            }
        }
        double[] objective = new double[p];
        List<LinearConstraint> constraints = new ArrayList<>(points.size() + 2 * p);
        for (double[] s : points) {
            for (int j = 0; j < p; j++) {
                objective[j] += s[j];
            }
            constraints.add(new LinearConstraint(s, Relationship.GEQ, 0));
        }
        for (int j = 0; j < p; j++) {
            double[] unit = new double[p];
            unit[j] = 1;
            constraints.add(new LinearConstraint(unit, Relationship.LEQ, 1));
            constraints.add(new LinearConstraint(unit, Relationship.GEQ, -1));
        }
        try {
            PointValuePair optimum = new SimplexSolver().optimize(new MaxIter(100_000),
                    new LinearObjectiveFunction(objective, 0), new LinearConstraintSet(constraints),
                    GoalType.MAXIMIZE, new NonNegativeConstraint(false));
            if (optimum.getValue() <= POSITIVE) {
                return new Outcome(Verdict.NONE, new int[0]);
            }
            double[] b = optimum.getPoint();
            int count = 0;
            for (double v : b) {
                if (Math.abs(v) > 1e-9) {
                    count++;
                }
            }
            int[] involved = new int[count];
            for (int j = 0, r = 0; j < p; j++) {
                if (Math.abs(b[j]) > 1e-9) {
                    involved[r++] = j;
                }
            }
            return new Outcome(Verdict.SEPARATED, involved);
        } catch (MathIllegalStateException e) {
            return new Outcome(Verdict.UNDECIDED, new int[0]);
        }
    }

    private static double[] signed(double[] x, int i, int p, double sign) {
        double[] s = new double[p];
        for (int j = 0; j < p; j++) {
            s[j] = sign * x[i * p + j];
        }
        return s;
    }
}
