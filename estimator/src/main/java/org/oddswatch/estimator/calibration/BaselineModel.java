package org.oddswatch.estimator.calibration;

import java.util.List;
import org.oddswatch.estimator.terms.Column;

/**
 * A frozen logistic model that new windows are compared with: its design columns, coefficients and
 * covariance, and where it came from. Immutable; arrays are copied in and out.
 *
 * @param columns the design columns the coefficients belong to (intercept first)
 * @param coefficients log-odds coefficients, one per column (0 for a dropped column)
 * @param covariance inverse information matrix, p x p
 * @param periodStart start of the fitting period, RFC 3339
 * @param periodEnd exclusive end of the fitting period, RFC 3339
 * @param events complete-case events it was fitted on
 * @param cases positives among them
 * @param definitionChecksum checksum of the monitor definition it was fitted under
 */
public record BaselineModel(List<Column> columns, double[] coefficients, double[][] covariance, String periodStart,
                            String periodEnd, long events, long cases, String definitionChecksum) {

    public BaselineModel {
        columns = List.copyOf(columns);
        coefficients = coefficients.clone();
        if (coefficients.length != columns.size()) {
            throw new IllegalArgumentException("one coefficient per column expected");
        }
        double[][] copy = new double[covariance.length][];
        for (int i = 0; i < covariance.length; i++) {
            copy[i] = covariance[i].clone();
        }
        covariance = copy;
    }

    /** Linear predictor {@code x . beta} of a coded design row. */
    public double linearPredictor(double[] row) {
        double eta = 0;
        for (int j = 0; j < coefficients.length; j++) {
            eta += row[j] * coefficients[j];
        }
        return eta;
    }

    /** Baseline risk {@code 1 / (1 + exp(-eta))} of a coded design row. */
    public double risk(double[] row) {
        double eta = linearPredictor(row);
        return eta >= 0 ? 1.0 / (1.0 + Math.exp(-eta)) : Math.exp(eta) / (1.0 + Math.exp(eta));
    }

    /** Coefficient of the column labelled {@code term}/{@code level}, or NaN when absent. */
    public double coefficient(String term, String level) {
        int j = indexOf(term, level);
        return j < 0 ? Double.NaN : coefficients[j];
    }

    /** Standard error of that coefficient, or NaN when absent. */
    public double standardError(String term, String level) {
        int j = indexOf(term, level);
        return j < 0 ? Double.NaN : Math.sqrt(covariance[j][j]);
    }

    private int indexOf(String term, String level) {
        for (int j = 0; j < columns.size(); j++) {
            Column c = columns.get(j);
            if (c.term().equals(term) && java.util.Objects.equals(c.level(), level)) {
                return j;
            }
        }
        return -1;
    }

    @Override
    public double[] coefficients() {
        return coefficients.clone();
    }

    @Override
    public double[][] covariance() {
        double[][] copy = new double[covariance.length][];
        for (int i = 0; i < covariance.length; i++) {
            copy[i] = covariance[i].clone();
        }
        return copy;
    }
}
