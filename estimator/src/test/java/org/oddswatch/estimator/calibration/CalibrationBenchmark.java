package org.oddswatch.estimator.calibration;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;

import java.util.Arrays;
import java.util.Random;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.window.WindowData;

/**
 * Time to assess calibration on a 1,000,000-event window, in both storage modes: 80 covariate
 * patterns (exposure, 5 age bands, sex, 4 regions: 10 columns) and 1,000,000 single-event rows with
 * a numeric term. Run with {@code mvn -Pbench -pl estimator test -Dtest=CalibrationBenchmark}; the
 * figures go to standard output (surefire's per-class output file). The baseline is the generating
 * model, so the assertions check that a correct model looks calibrated.
 */
@Tag("benchmark")
class CalibrationBenchmark {

    private static final double[] TRUTH = {-2.4, 0.9, 0.1, 0.25, 0.4, 0.6, 0.15, -0.1, 0.2, 0.05};

    @Test
    void oneMillionEventsAsPatternCounts() {
        Random random = new Random(42);
        double[] x = new double[80 * 10];
        double[] trials = new double[80];
        double[] positives = new double[80];
        int row = 0;
        double[] design = new double[10];
        for (int exposure = 0; exposure < 2; exposure++) {
            for (int age = 0; age < 5; age++) {
                for (int sex = 0; sex < 2; sex++) {
                    for (int region = 0; region < 4; region++) {
                        Arrays.fill(design, 0);
                        design[0] = 1;
                        design[1] = exposure;
                        if (age > 0) {
                            design[1 + age] = 1;
                        }
                        design[6] = sex;
                        if (region > 0) {
                            design[6 + region] = 1;
                        }
                        System.arraycopy(design, 0, x, row * 10, 10);
                        row++;
                    }
                }
            }
        }
        for (int e = 0; e < 1_000_000; e++) {
            int i = random.nextInt(80);
            trials[i]++;
            if (random.nextDouble() < ScoredRows.logistic(dot(x, i, 10, TRUTH))) {
                positives[i]++;
            }
        }
        run("80 patterns, 1,000,000 events", CalibrationFixtures.window(10, x, trials, positives));
    }

    @Test
    void oneMillionSingleEventRows() {
        Random random = new Random(43);
        int n = 1_000_000;
        double[] beta = {-2.6, 0.9, 0.25};
        double[] x = new double[n * 3];
        double[] trials = new double[n];
        double[] positives = new double[n];
        for (int i = 0; i < n; i++) {
            x[3 * i] = 1;
            x[3 * i + 1] = random.nextDouble() < 0.3 ? 1 : 0;
            x[3 * i + 2] = 0.5 + 8 * random.nextDouble();
            trials[i] = 1;
            positives[i] = random.nextDouble() < ScoredRows.logistic(dot(x, i, 3, beta)) ? 1 : 0;
        }
        run("1,000,000 single-event rows, numeric term", CalibrationFixtures.window(3, x, trials, positives),
                beta);
    }

    private static void run(String label, WindowData data) {
        run(label, data, TRUTH);
    }

    private static void run(String label, WindowData data, double[] beta) {
        BaselineModel baseline = CalibrationFixtures.baseline(beta);
        CalibrationEstimate result = null;
        long[] nanos = new long[7];
        for (int r = 0; r < nanos.length; r++) {
            long start = System.nanoTime();
            result = CalibrationStatistics.compute(data, baseline, 0.95);
            nanos[r] = System.nanoTime() - start;
        }
        Arrays.sort(nanos);
        System.out.printf("calibration, %s: median %.2f ms (min %.2f, max %.2f) over %d runs; HL groups %d%n",
                label, nanos[nanos.length / 2] / 1e6, nanos[0] / 1e6, nanos[nanos.length - 1] / 1e6,
                nanos.length, result.hosmerLemeshowGroups());
        assertNotNull(result.slope());
        // The baseline is the generating model: O/E, intercept and slope are near their calibrated values.
        assertEquals(1.0, result.observedExpected(), 0.02);
        assertEquals(0.0, result.intercept(), 0.03);
        assertEquals(1.0, result.slope(), 0.05);
    }

    private static double dot(double[] x, int row, int p, double[] beta) {
        double s = 0;
        for (int j = 0; j < p; j++) {
            s += x[row * p + j] * beta[j];
        }
        return s;
    }
}
