package org.oddswatch.estimator.reference;

import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.MatrixUtils;
import org.apache.commons.math3.optim.InitialGuess;
import org.apache.commons.math3.optim.MaxEval;
import org.apache.commons.math3.optim.PointValuePair;
import org.apache.commons.math3.optim.nonlinear.scalar.GoalType;
import org.apache.commons.math3.optim.nonlinear.scalar.ObjectiveFunction;
import org.apache.commons.math3.optim.nonlinear.scalar.noderiv.NelderMeadSimplex;
import org.apache.commons.math3.optim.nonlinear.scalar.noderiv.SimplexOptimizer;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;

/**
 * An independent check of the Firth profile: maximises {@code l(beta) + 0.5 log det X'WX} over the
 * free coordinates with beta_j = c by Commons Math's derivative-free Nelder–Mead optimiser, the
 * objective computed here from its definition (Firth 1993), not by the estimator's code.
 */
final class PenalizedProfile {

    private PenalizedProfile() {
    }

    static double at(FitProblem problem, FitResult fit, int j, double c) {
        int p = problem.columns();
        double[] start = new double[p - 1];
        for (int k = 0, a = 0; k < p; k++) {
            if (k != j) {
                start[a++] = fit.coefficients()[k];
            }
        }
        double best = Double.NEGATIVE_INFINITY;
        double[] guess = start;
        for (int round = 0; round < 4; round++) {
            PointValuePair opt = new SimplexOptimizer(1e-15, 1e-15).optimize(new MaxEval(200_000),
                    new ObjectiveFunction(free -> penalized(problem, j, c, free)), GoalType.MAXIMIZE,
                    new InitialGuess(guess), new NelderMeadSimplex(p - 1, 0.1));
            guess = opt.getPoint();
            best = Math.max(best, opt.getValue());
        }
        return best;
    }

    static double penalized(FitProblem problem, int j, double c, double[] free) {
        int p = problem.columns();
        double[] beta = new double[p];
        for (int k = 0, a = 0; k < p; k++) {
            beta[k] = k == j ? c : free[a++];
        }
        double ll = 0;
        double[][] info = new double[p][p];
        for (int i = 0; i < problem.rows(); i++) {
            double eta = 0;
            for (int k = 0; k < p; k++) {
                eta += problem.x()[i * p + k] * beta[k];
            }
            double mu = 1 / (1 + Math.exp(-eta));
            double n = problem.trials()[i];
            double y = problem.positives()[i];
            ll += y * Math.log(mu) + (n - y) * Math.log(1 - mu);
            double w = n * mu * (1 - mu);
            for (int a = 0; a < p; a++) {
                for (int b = 0; b < p; b++) {
                    info[a][b] += w * problem.x()[i * p + a] * problem.x()[i * p + b];
                }
            }
        }
        double det = new CholeskyDecomposition(MatrixUtils.createRealMatrix(info)).getDeterminant();
        return ll + 0.5 * Math.log(det);
    }
}
