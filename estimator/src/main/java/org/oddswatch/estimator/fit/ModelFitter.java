package org.oddswatch.estimator.fit;

/**
 * The window model's fitting sequence: drop aliased columns ({@link RankCheck}); fit by Newton from
 * the warm start, stopping early once some fitted log-odds pass {@link SeparationCheck#EXTREME_ETA};
 * when that fit looks divergent ({@link SeparationCheck#suspicious}) test for separation and, if
 * separated, refit by Firth's penalized likelihood; otherwise (rerun without the early stop when it
 * fired) retry from the cold start when the warm start did not converge.
 *
 * <p>The Firth refit gets a larger iteration cap ({@link #firthControl}). State: separation wins over non-convergence, which wins over rank deficiency; a Firth fit that
 * does not converge is {@code NOT_CONVERGED}.
 */
public final class ModelFitter {

    private ModelFitter() {
    }

    /**
     * @param problem the window's problem (must have some positives and some negatives)
     * @param warm start vector over all columns, or null
     */
    public static ModelFit fit(FitProblem problem, double[] warm, FitControl control) {
        IndicatorGroups groups = IndicatorGroups.of(problem);
        int[] dropped = RankCheck.aliased(problem, groups);
        int[] keep = RankCheck.kept(problem.columns(), dropped);
        if (keep.length == 0) {
            throw new IllegalArgumentException("no column of the design carries information");
        }
        FitProblem work = dropped.length == 0 ? problem : problem.selectColumns(keep);
        double[] start = warm == null || warm.length != problem.columns() ? null : FitDriver.select(warm, keep);
        IndicatorGroups workGroups = dropped.length == 0 ? groups : IndicatorGroups.of(work);
        FitControl watchful = control.withDivergenceStop(SeparationCheck.EXTREME_ETA);
        FitResult newton = FitDriver.firstAttempt(work, workGroups, start, watchful, false);
        if (SeparationCheck.suspicious(newton)) {
            SeparationCheck.Outcome outcome = SeparationCheck.check(work, workGroups);
            if (outcome.verdict() == SeparationCheck.Verdict.SEPARATED) {
                return firth(work, workGroups, start, control, keep, dropped, outcome.involved(), false);
            }
            if (newton.stop().reason() == FitStop.Reason.DIVERGING) {
                // Large fitted log-odds without separation: fit again without the stop.
                newton = FitDriver.firstAttempt(work, workGroups, start, control, false);
            }
            newton = FitDriver.retryCold(work, workGroups, newton, control, false);
            if (outcome.verdict() == SeparationCheck.Verdict.UNDECIDED && SeparationCheck.heuristic(newton)) {
                return firth(work, workGroups, start, control, keep, dropped, new int[0], true);
            }
        }
        // Not suspicious means converged: no restart needed.
        FitState state = !newton.converged() ? FitState.NOT_CONVERGED
                : dropped.length > 0 ? FitState.RANK_DEFICIENT : FitState.CONVERGED;
        return new ModelFit(state, work, keep, dropped, newton, new int[0], false);
    }

    private static ModelFit firth(FitProblem work, IndicatorGroups groups, double[] start, FitControl control,
                                  int[] keep, int[] dropped, int[] separating, boolean byHeuristic) {
        FitResult firth = FitDriver.fitFullRank(work, groups, start, null, firthControl(control), true);
        int[] involved = new int[separating.length];
        for (int a = 0; a < involved.length; a++) {
            involved[a] = keep[separating[a]];
        }
        FitState state = firth.converged() ? FitState.SEPARATION : FitState.NOT_CONVERGED;
        return new ModelFit(state, work, keep, dropped, firth, involved, byHeuristic);
    }

    /**
     * Firth's step {@code I^-1 U*} ignores the derivative of the hat-value correction, so it converges
     * linearly rather than quadratically, with a contraction per step that approaches 1 where the
     * penalty supplies most of the curvature (few events, nearly collinear numeric columns: about 300
     * steps for a separated 28-row design with an age in days and a column correlated 0.998 with it).
     * Each step is as cheap as a Newton step. Cap: twenty times the Newton cap, at least 500 (brglm2's
     * {@code maxit} in the reference fixtures).
     */
    static FitControl firthControl(FitControl control) {
        return control.withMaxIterations(Math.max(500, 20 * control.maxIterations()));
    }
}
