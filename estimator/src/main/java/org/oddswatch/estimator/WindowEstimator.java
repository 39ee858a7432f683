package org.oddswatch.estimator;

import java.time.Instant;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.window.WindowData;

/**
 * Turns one window's data into a {@link WindowEstimate}: prevalence, the logistic fit (Newton,
 * falling back to Firth under separation), coefficients with Wald and profile intervals, LR tests of
 * watched terms, and the calibration of a baseline model. Stateless and deterministic: the same
 * arguments give an equal estimate.
 */
public final class WindowEstimator {

    public WindowEstimator(DesignCoder coder, EstimatorOptions options) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * @param warmStart coefficients to start Newton from (the previous final window's, see
     *     {@link #coefficientVector(WindowEstimate)}), or null for a cold start
     * @param baseline the frozen baseline model to assess calibration of, or null
     */
    public WindowEstimate estimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status,
                                   WindowData data, double[] warmStart, BaselineModel baseline) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * Fits and freezes a baseline model on one period's data (Newton, Firth under separation).
     *
     * @throws IllegalArgumentException when the data cannot support a model (no positives or no
     *     negatives), with a message saying so
     */
    public BaselineModel fitBaseline(WindowData data, String periodStart, String periodEnd,
                                     String definitionChecksum) {
        throw new UnsupportedOperationException("not implemented yet");
    }

    /**
     * The estimate's coefficients as a vector over the coder's columns (0 for dropped columns), fit
     * for a warm start; null when the estimate has no model.
     */
    public double[] coefficientVector(WindowEstimate estimate) {
        throw new UnsupportedOperationException("not implemented yet");
    }
}
