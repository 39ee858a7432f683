package org.oddswatch.estimator.calibration;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.estimator.prevalence.CsvFixture;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.window.WindowData;

/** Loads the calibration datasets written by src/test/reference/calibration.R. */
final class CalibrationFixtures {

    private CalibrationFixtures() {
    }

    static WindowData data(String name) {
        CsvFixture csv = CsvFixture.load("/reference/calibration-" + name + "-data.csv");
        int p = csv.header().size() - 2;
        int n = csv.size();
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < p; j++) {
                x[i * p + j] = csv.number(i, "x" + j);
            }
            trials[i] = csv.number(i, "trials");
            positives[i] = csv.number(i, "positives");
        }
        return window(p, x, trials, positives);
    }

    static BaselineModel baseline(String name) {
        CsvFixture csv = CsvFixture.load("/reference/calibration-" + name + "-baseline.csv");
        double[] beta = new double[csv.header().size()];
        for (int j = 0; j < beta.length; j++) {
            beta[j] = csv.number(0, "x" + j);
        }
        return baseline(beta);
    }

    /** A baseline with the given coefficients over generic columns (intercept first). */
    static BaselineModel baseline(double... beta) {
        List<Column> columns = new ArrayList<>();
        columns.add(Column.intercept());
        for (int j = 1; j < beta.length; j++) {
            columns.add(new Column("x" + j, null, null, 1.0, false, false));
        }
        return new BaselineModel(columns, beta, new double[beta.length][beta.length], "2026-01-01T00:00:00Z",
                "2026-02-01T00:00:00Z", 1000, 100, "test");
    }

    static WindowData window(int p, double[] x, double[] trials, double[] positives) {
        long events = 0;
        long cases = 0;
        for (int i = 0; i < trials.length; i++) {
            events += Math.round(trials[i]);
            cases += Math.round(positives[i]);
        }
        return new WindowData(p, trials.length, x, trials, positives, events, cases, new long[0], new long[0]);
    }

    /** The same window with every pattern expanded into single-event rows (positives first). */
    static WindowData expanded(WindowData grouped) {
        int p = grouped.columns();
        int n = (int) grouped.completeEvents();
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        int row = 0;
        for (int i = 0; i < grouped.rows(); i++) {
            for (int k = 0; k < grouped.trials()[i]; k++) {
                System.arraycopy(grouped.x(), i * p, x, row * p, p);
                trials[row] = 1;
                positives[row] = k < grouped.positives()[i] ? 1 : 0;
                row++;
            }
        }
        return window(p, x, trials, positives);
    }
}
