package org.oddswatch.estimator.fit;

/**
 * The common frame of {@link NewtonFitter} and {@link FirthFitter}: drop aliased columns, start
 * warm (or cold), retry cold when a warm start fails, map the result back to the full width.
 */
final class FitDriver {

    private FitDriver() {
    }

    static FitResult fit(FitProblem problem, double[] start, FitControl control, boolean penalized) {
        if (start != null && start.length != problem.columns()) {
            throw new IllegalArgumentException("start vector has " + start.length + " values for "
                    + problem.columns() + " columns");
        }
        IndicatorGroups groups = IndicatorGroups.of(problem);
        int[] dropped = RankCheck.aliased(problem, groups);
        int[] keep = RankCheck.kept(problem.columns(), dropped);
        if (keep.length == 0) {
            throw new IllegalArgumentException("no column of the design carries information (all aliased or empty)");
        }
        FitProblem work = dropped.length == 0 ? problem : problem.selectColumns(keep);
        double[] warm = start == null ? null : select(start, keep);
        FitResult reduced = fitFullRank(work, dropped.length == 0 ? groups : IndicatorGroups.of(work), warm, null,
                control, penalized);
        return dropped.length == 0 ? reduced : expand(reduced, problem.columns(), keep, dropped);
    }

    /**
     * Fits a full-rank problem, the coordinates marked in {@code fixed} held at their start values
     * (which must be given in {@code start} when {@code fixed} is not null).
     */
    static FitResult fitFullRank(FitProblem work, double[] warm, boolean[] fixed, FitControl control,
                                 boolean penalized) {
        return fitFullRank(work, IndicatorGroups.of(work), warm, fixed, control, penalized);
    }

    /** As above, with the problem's indicator grouping (or null) already computed. */
    static FitResult fitFullRank(FitProblem work, IndicatorGroups groups, double[] warm, boolean[] fixed,
                                 FitControl control, boolean penalized) {
        boolean usable = warm != null && allFinite(warm);
        if (usable && fixed == null) {
            return retryCold(work, groups, NewtonEngine.run(work, groups, warm, null, penalized, control, true), control,
                    penalized);
        }
        if (fixed != null) {
            FitResult first = NewtonEngine.run(work, groups, warm, fixed, penalized, control, true);
            if (first.converged()) {
                return first;
            }
            FitResult cold = NewtonEngine.run(work, groups, coldStart(work, groups, fixed, warm), fixed, penalized, control,
                    false);
            return cold.converged() || cold.objective() > first.objective() ? cold : first;
        }
        return NewtonEngine.run(work, groups, coldStart(work, groups, null, null), null, penalized, control, false);
    }

    /** The first attempt of an unconstrained fit: from the warm start when it is usable, cold otherwise. */
    static FitResult firstAttempt(FitProblem work, IndicatorGroups groups, double[] warm, FitControl control,
                                  boolean penalized) {
        boolean usable = warm != null && allFinite(warm);
        return NewtonEngine.run(work, groups, usable ? warm : coldStart(work, groups, null, null), null, penalized,
                control, usable);
    }

    /**
     * An unconstrained fit's first attempt if it converged or started cold; else the cold restart when that
     * converged or reached a higher objective.
     */
    static FitResult retryCold(FitProblem work, IndicatorGroups groups, FitResult first, FitControl control,
                               boolean penalized) {
        if (first.converged() || !first.warmStartUsed()) {
            return first;
        }
        FitResult cold = NewtonEngine.run(work, groups, coldStart(work, groups, null, null), null, penalized, control,
                false);
        return cold.converged() || cold.objective() > first.objective() ? cold : first;
    }

    /**
     * Cold start: 0 everywhere except an intercept column (all ones) set to {@code logit(ybar)} minus
     * the trials-weighted mean offset; fixed coordinates keep their given values.
     */
    static double[] coldStart(FitProblem problem, boolean[] fixed, double[] fixedValues) {
        return coldStart(problem, null, fixed, fixedValues);
    }

    /** As above, the intercept test answered by the problem's grouping when there is one. */
    static double[] coldStart(FitProblem problem, IndicatorGroups groups, boolean[] fixed, double[] fixedValues) {
        int p = problem.columns();
        double[] beta = new double[p];
        if (fixed != null) {
            for (int j = 0; j < p; j++) {
                if (fixed[j]) {
                    beta[j] = fixedValues[j];
                }
            }
        }
        if ((fixed == null || !fixed[0])
                && (groups != null ? groups.isConstantOne(0) : isConstantOne(problem, 0))) {
            double n = problem.totalTrials();
            double y = problem.totalPositives();
            double ybar = n > 0 ? y / n : 0.5;
            ybar = Math.min(Math.max(ybar, 1e-8), 1 - 1e-8);
            double meanOffset = 0;
            if (problem.offset() != null && n > 0) {
                for (int i = 0; i < problem.rows(); i++) {
                    meanOffset += problem.trials()[i] * problem.offset()[i];
                }
                meanOffset /= n;
            }
            beta[0] = Math.log(ybar / (1 - ybar)) - meanOffset;
        }
        return beta;
    }

    private static boolean isConstantOne(FitProblem problem, int column) {
        int p = problem.columns();
        for (int i = 0; i < problem.rows(); i++) {
            if (problem.x()[i * p + column] != 1.0) {
                return false;
            }
        }
        return true;
    }

    private static boolean allFinite(double[] v) {
        for (double d : v) {
            if (!Double.isFinite(d)) {
                return false;
            }
        }
        return true;
    }

    static double[] select(double[] full, int[] keep) {
        double[] out = new double[keep.length];
        for (int a = 0; a < keep.length; a++) {
            out[a] = full[keep[a]];
        }
        return out;
    }

    /** Maps a reduced fit back to p columns: 0 coefficients and zero covariance rows for dropped ones. */
    static FitResult expand(FitResult r, int p, int[] keep, int[] dropped) {
        double[] beta = new double[p];
        for (int a = 0; a < keep.length; a++) {
            beta[keep[a]] = r.coefficients()[a];
        }
        double[][] cov = null;
        if (r.covariance() != null) {
            cov = new double[p][p];
            for (int a = 0; a < keep.length; a++) {
                for (int b = 0; b < keep.length; b++) {
                    cov[keep[a]][keep[b]] = r.covariance()[a][b];
                }
            }
        }
        double[] score = new double[p];
        for (int a = 0; a < keep.length; a++) {
            score[keep[a]] = r.score()[a];
        }
        return new FitResult(beta, cov, r.logLikelihood(), r.penalizedLogLikelihood(), r.iterations(), r.stop(),
                r.warmStartUsed(), r.method(), dropped.clone(), r.maxAbsScore(), r.maxAbsLinearPredictor(), r.trace(),
                score);
    }
}
