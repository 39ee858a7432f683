package org.oddswatch.estimator;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.fit.LikelihoodRatioTest;
import org.oddswatch.estimator.fit.ModelFit;
import org.oddswatch.estimator.fit.ModelFitter;
import org.oddswatch.estimator.fit.ProfileLikelihood;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.FitSummary;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.Term;
import org.oddswatch.estimator.window.WindowData;

/**
 * The model part of a window estimate: fit summary, coefficient table and notes.
 *
 * <p>Per coefficient: {@code se = sqrt((I^-1)_jj)}, Wald {@code z = coef / se}, two-sided
 * {@code p = erfc(|z| / sqrt 2)}, odds ratio {@code exp(coef)} with Wald bounds
 * {@code exp(coef -+ z_{(1+level)/2} se)}; for watched terms also profile-likelihood bounds and the
 * term's likelihood-ratio test. A value that would be NaN or infinite (an overflowing odds ratio, a
 * singular information matrix) is null.
 *
 * <p>Fit state precedence: {@code no-model} (no complete cases, or no positives, or no negatives
 * among them), {@code separation}, {@code not-converged}, {@code too-few-events} (fewer than
 * {@code minEventsPerParameter} events of the rarer outcome per non-intercept parameter),
 * {@code rank-deficient}, {@code converged}; notes name every condition that applies.
 */
final class ModelReport {

    final FitSummary summary;
    final List<CoefficientEstimate> coefficients;
    final ModelFit modelFit;

    private ModelReport(FitSummary summary, List<CoefficientEstimate> coefficients, ModelFit modelFit) {
        this.summary = summary;
        this.coefficients = coefficients;
        this.modelFit = modelFit;
    }

    static ModelReport of(DesignCoder coder, EstimatorOptions options, WindowData data, double[] warmStart,
                          List<String> notes) {
        long n = data.completeEvents();
        long y = data.completePositives();
        if (data.events() > n) {
            notes.add((data.events() - n) + " of the window's " + data.events() + " events lack a covariate value "
                    + "and are left out of the model (complete cases); prevalence counts all of them");
        }
        if (n == 0 || y == 0 || y == n) {
            notes.add(n == 0 ? "no complete-case events in the window: prevalence only, no model"
                    : y == 0 ? "no positives among the " + n + " complete-case events: odds ratios cannot be "
                    + "estimated, prevalence only"
                    : "all " + n + " complete-case events are positive: odds ratios cannot be estimated, "
                    + "prevalence only");
            return new ModelReport(new FitSummary(FitState.NO_MODEL, FitMethod.NEWTON, n, 0, false, null, null,
                    List.of()), List.of(), null);
        }
        FitControl control = FitControl.defaults().withMaxIterations(options.maxIterations());
        FitProblem problem = new FitProblem(data.rows(), data.columns(), data.x(), data.trials(), data.positives(),
                null);
        ModelFit mf = ModelFitter.fit(problem, warmStart, control);
        FitResult fit = mf.fit();
        List<Column> columns = coder.columns();
        List<String> dropped = new ArrayList<>();
        for (int j : mf.dropped()) {
            dropped.add(columns.get(j).label());
            notes.add(droppedNote(columns.get(j), problem, j));
        }
        FitState state = mf.state();
        int parameters = mf.keep().length - 1;
        long rarer = Math.min(y, n - y);
        boolean tooFew = parameters > 0 && rarer < options.minEventsPerParameter() * parameters;
        if (tooFew) {
            notes.add(String.format(Locale.ROOT, "only %d events of the rarer outcome for %d parameters (%.1f per "
                    + "parameter, below %s): estimates are unstable and intervals unreliable", rarer, parameters,
                    (double) rarer / parameters, plain(options.minEventsPerParameter())));
            if (state == FitState.CONVERGED || state == FitState.RANK_DEFICIENT) {
                state = FitState.TOO_FEW_EVENTS;
            }
        }
        if (mf.method() == FitMethod.FIRTH) {
            notes.add(separationNote(mf, columns));
        }
        if (state == FitState.NOT_CONVERGED) {
            String restart = warmStart != null ? " (from the previous window's estimates; a restart from the "
                    + "overall proportion fared no better)" : "";
            notes.add("the " + (mf.method() == FitMethod.FIRTH ? "Firth fit" : "fit") + " did not converge"
                    + restart + ": " + fit.stopDescription() + "; the estimates are the last iterate and should not "
                    + "be relied on");
        }
        boolean inference = state != FitState.NOT_CONVERGED;
        List<CoefficientEstimate> table = coefficientTable(coder, options, mf, control, inference);
        double nullLl = y * Math.log((double) y / n) + (n - y) * Math.log((double) (n - y) / n);
        FitSummary summary = new FitSummary(state, mf.method(), n, fit.iterations(), fit.warmStartUsed(),
                finite(fit.logLikelihood()), finite(nullLl), List.copyOf(dropped));
        return new ModelReport(summary, table, mf);
    }

    private static List<CoefficientEstimate> coefficientTable(DesignCoder coder, EstimatorOptions options,
                                                              ModelFit mf, FitControl control, boolean inference) {
        List<Column> columns = coder.columns();
        FitResult fit = mf.fit();
        double zq = Math.sqrt(ProfileLikelihood.chiSquareOneQuantile(options.level()));
        LikelihoodRatioTest[] lrByColumn = new LikelihoodRatioTest[columns.size()];
        if (inference && options.profileIntervals()) {
            for (int t = 0; t < coder.terms().size(); t++) {
                Term term = coder.terms().get(t);
                if (term.watched()) {
                    int[] kept = keptColumnsOf(coder, t, mf);
                    if (kept.length > 0) {
                        LikelihoodRatioTest lr = LikelihoodRatioTest.of(mf.work(), fit, kept, control);
                        for (int a : kept) {
                            lrByColumn[mf.keep()[a]] = lr;
                        }
                    }
                }
            }
        }
        List<CoefficientEstimate> table = new ArrayList<>();
        for (int a = 0; a < mf.keep().length; a++) {
            int j = mf.keep()[a];
            Column col = columns.get(j);
            double coef = fit.coefficients()[a];
            Double se = inference ? finite(fit.standardError(a)) : null;
            Double z = se == null ? null : finite(coef / se);
            Double p = z == null ? null : finite(org.apache.commons.math3.special.Erf.erfc(Math.abs(z) / Math.sqrt(2)));
            boolean intercept = col.isIntercept();
            Double or = intercept ? null : finite(Math.exp(coef));
            Double lower = intercept || se == null ? null : finite(Math.exp(coef - zq * se));
            Double upper = intercept || se == null ? null : finite(Math.exp(coef + zq * se));
            Double profileLower = null;
            Double profileUpper = null;
            LikelihoodRatioTest lr = lrByColumn[j];
            if (lr != null) {
                double[] bounds = ProfileLikelihood.interval(mf.work(), fit, a, options.level(), control);
                profileLower = finite(Math.exp(bounds[0]));
                profileUpper = finite(Math.exp(bounds[1]));
            }
            table.add(new CoefficientEstimate(col.term(), col.level(), col.reference(), col.per(), coef, se, z, p, or,
                    lower, upper, intercept || se == null ? null : "wald", profileLower, profileUpper,
                    lr == null ? null : finite(lr.chiSquare()), lr == null ? null : lr.df(),
                    lr == null ? null : finite(lr.p())));
        }
        return List.copyOf(table);
    }

    /** Positions among the kept columns of term t's columns. */
    private static int[] keptColumnsOf(DesignCoder coder, int t, ModelFit mf) {
        int first = coder.offsetOf(t);
        int count = coder.terms().get(t).columns().size();
        return java.util.stream.IntStream.range(first, first + count).map(mf::keptIndex).filter(a -> a >= 0)
                .toArray();
    }

    private static String droppedNote(Column column, FitProblem problem, int j) {
        int p = problem.columns();
        double min = Double.POSITIVE_INFINITY;
        double max = Double.NEGATIVE_INFINITY;
        for (int i = 0; i < problem.rows(); i++) {
            if (problem.trials()[i] > 0) {
                double v = problem.x()[i * p + j];
                min = Math.min(min, v);
                max = Math.max(max, v);
            }
        }
        String label = column.label();
        if (min == 0 && max == 0) {
            return column.indicator()
                    ? "no complete-case event has " + label + ": its column was dropped and the rest fitted"
                    : label + " is 0 in every complete-case event: its column was dropped and the rest fitted";
        }
        if (min == max) {
            return column.indicator()
                    ? "every complete-case event has " + label + ": its column duplicates the intercept and was "
                    + "dropped"
                    : label + " takes the same value in every complete-case event: its column duplicates the "
                    + "intercept and was dropped";
        }
        return label + " is a linear combination of earlier columns in this window (collinear): its column was "
                + "dropped and the rest fitted";
    }

    private static String separationNote(ModelFit mf, List<Column> columns) {
        List<String> involved = new ArrayList<>();
        for (int j : mf.separating()) {
            if (!columns.get(j).isIntercept()) {
                involved.add(columns.get(j).label());
            }
        }
        String by = involved.isEmpty() ? "" : " by " + String.join(", ", involved);
        String how = mf.separationByHeuristic() ? " (judged from diverging estimates; the exact check could not "
                + "be completed)" : "";
        return "the outcome is completely or quasi-completely separated" + by + how + ": maximum-likelihood "
                + "estimates do not exist, so Firth's penalized-likelihood estimates are reported, with profile "
                + "penalized-likelihood intervals for watched terms; a zero cell is the usual cause";
    }

    private static String plain(double v) {
        return v == Math.rint(v) ? Long.toString((long) v) : Double.toString(v);
    }

    static Double finite(double v) {
        return Double.isFinite(v) ? v : null;
    }
}
