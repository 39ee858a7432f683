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
 * The separation programme of Konis (2007) solved in one piece, one constraint per point, with Commons
 * Math's dense simplex: the estimator's exact check before constraint generation, kept as the reference
 * that {@link SeparationCheck} must agree with (verdict and involved columns). Cost grows with the square
 * of the number of points, so only for small designs.
 */
final class DenseSeparationProgramme {

    private static final double POSITIVE = 1e-7;

    private DenseSeparationProgramme() {
    }

    /** The optimum of {@code sum_i a_i . b} over all points (0 when not separated). */
    static double optimum(FitProblem problem) {
        double[] b = solution(problem);
        return objective(problem, b);
    }

    /** {@code sum_i s_i x_i . b} over the points of the problem. */
    static double objective(FitProblem problem, double[] b) {
        int p = problem.columns();
        double sum = 0;
        for (int i = 0; i < problem.rows(); i++) {
            double t = problem.trials()[i];
            double y = problem.positives()[i];
            double eta = 0;
            for (int j = 0; j < p; j++) {
                eta += problem.x()[i * p + j] * b[j];
            }
            sum += (y > 0 ? eta : 0) + (t - y > 0 ? -eta : 0);
        }
        return sum;
    }

    /** {@code null} when not separated, else the involved columns. */
    static int[] separatingColumns(FitProblem problem) {
        double[] b = solution(problem);
        if (objective(problem, b) <= POSITIVE) {
            return null;
        }
        int count = 0;
        for (double v : b) {
            if (Math.abs(v) > 1e-9) {
                count++;
            }
        }
        int[] involved = new int[count];
        for (int j = 0, r = 0; j < b.length; j++) {
            if (Math.abs(b[j]) > 1e-9) {
                involved[r++] = j;
            }
        }
        return involved;
    }

    /** An optimal b of the whole programme. */
    static double[] solution(FitProblem problem) {
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
            return optimum.getPoint();
        } catch (MathIllegalStateException e) {
            throw new IllegalStateException("the dense programme failed", e);
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
