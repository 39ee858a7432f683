package org.oddswatch.estimator;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.calibration.CalibrationStatistics;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.prevalence.Prevalence;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.Term;
import org.oddswatch.estimator.window.WindowData;

/**
 * Turns one window's data into a {@link WindowEstimate}: prevalence, the logistic fit (Newton,
 * falling back to Firth under separation), coefficients with Wald and profile intervals, LR tests of
 * watched terms, and the calibration of a baseline model. Stateless and deterministic: the same
 * arguments give an equal estimate.
 */
public final class WindowEstimator {

    private final DesignCoder coder;
    private final EstimatorOptions options;
    private final CategoricalTerm stratumTerm;

    /**
     * @throws IllegalArgumentException when {@code options.stratifyBy()} names no categorical term
     *     of the coder
     */
    public WindowEstimator(DesignCoder coder, EstimatorOptions options) {
        this.coder = coder;
        this.options = options;
        this.stratumTerm = stratum(coder, options.stratifyBy());
    }

    private static CategoricalTerm stratum(DesignCoder coder, String name) {
        if (name == null) {
            return null;
        }
        int t = coder.termIndex(name);
        if (t < 0 || !(coder.terms().get(t) instanceof CategoricalTerm c)) {
            throw new IllegalArgumentException("stratum term '" + name + "' is not a categorical term of the model");
        }
        return c;
    }

    /**
     * @param warmStart coefficients to start Newton from (the previous final window's, see
     *     {@link #coefficientVector(WindowEstimate)}), or null for a cold start
     * @param baseline the frozen baseline model to assess calibration of, or null
     */
    public WindowEstimate estimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status,
                                   WindowData data, double[] warmStart, BaselineModel baseline) {
        if (data.columns() != coder.width()) {
            throw new IllegalArgumentException("window data has " + data.columns() + " columns, the model "
                    + coder.width());
        }
        List<String> notes = new ArrayList<>();
        PrevalenceEstimate prevalence = Prevalence.of(data.events(), data.cases(), options, notes::add);
        List<StratumPrevalence> strata = stratumTerm == null ? List.of()
                : Prevalence.strata(stratumTerm.name(), stratumTerm.levels(), data.stratumEvents(),
                data.stratumCases(), options);
        ModelReport model = ModelReport.of(coder, options, data, warmStart, notes);
        CalibrationEstimate calibration = baseline == null ? null : calibrate(data, baseline, notes);
        return new WindowEstimate(stream, windowStart, windowEnd, status, data.events(), data.cases(), prevalence,
                strata, model.summary, model.coefficients, calibration, notes);
    }

    private CalibrationEstimate calibrate(WindowData data, BaselineModel baseline, List<String> notes) {
        return CalibrationStatistics.compute(data, baseline, options, notes::add);
    }

    /**
     * Fits and freezes a baseline model on one period's data (Newton, Firth under separation).
     *
     * @throws IllegalArgumentException when the data cannot support a model (no positives or no
     *     negatives), with a message saying so
     */
    public BaselineModel fitBaseline(WindowData data, String periodStart, String periodEnd,
                                     String definitionChecksum) {
        List<String> notes = new ArrayList<>();
        ModelReport model = ModelReport.of(coder, options, data, null, notes);
        FitState state = model.summary.state();
        if (state == FitState.NO_MODEL || state == FitState.NOT_CONVERGED) {
            throw new IllegalArgumentException("cannot fit a baseline model on " + periodStart + " to " + periodEnd
                    + ": " + String.join("; ", notes));
        }
        int p = coder.width();
        FitResult fit = model.modelFit.fit();
        int[] keep = model.modelFit.keep();
        double[][] covariance = new double[p][p];
        if (fit.covariance() != null) {
            for (int a = 0; a < keep.length; a++) {
                for (int b = 0; b < keep.length; b++) {
                    covariance[keep[a]][keep[b]] = fit.covariance()[a][b];
                }
            }
        }
        return new BaselineModel(coder.columns(), model.modelFit.fullCoefficients(p), covariance, periodStart,
                periodEnd, data.completeEvents(), data.completePositives(), definitionChecksum);
    }

    /**
     * The estimate's coefficients as a vector over the coder's columns (0 for dropped columns), fit
     * for a warm start; null when the estimate has no model.
     */
    public double[] coefficientVector(WindowEstimate estimate) {
        if (estimate == null || estimate.fit() == null || estimate.fit().state() == FitState.NO_MODEL
                || estimate.coefficients().isEmpty()) {
            return null;
        }
        List<Column> columns = coder.columns();
        double[] beta = new double[columns.size()];
        for (int j = 0; j < columns.size(); j++) {
            CoefficientEstimate c = estimate.coefficient(columns.get(j).term(), columns.get(j).level());
            beta[j] = c == null ? 0 : c.coef();
        }
        return beta;
    }

    /** The coder's terms, for callers that need them beside the estimator. */
    public List<Term> terms() {
        return coder.terms();
    }
}
