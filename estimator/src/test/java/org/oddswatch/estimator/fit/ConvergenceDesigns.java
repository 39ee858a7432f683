package org.oddswatch.estimator.fit;

import java.util.ArrayList;
import java.util.List;

/**
 * The designs of {@code src/test/reference/convergence_fixtures.py}, drawn row for row the same way: a
 * counter-based generator (SplitMix64 of the row index and a stream number) and only operations IEEE 754
 * rounds identically in both languages (+, -, *, /, sqrt, floor).
 */
final class ConvergenceDesigns {

    private ConvergenceDesigns() {
    }

    static long splitmix(long index, long stream) {
        long z = index * 0x9E3779B97F4A7C15L + stream * 0xD1B54A32D192ED03L + 0x632BE59BD9B4E019L;
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return z ^ (z >>> 31);
    }

    /** In [0, 1), 53 random bits. */
    static double uniform(long index, long stream) {
        return (splitmix(index, stream) >>> 11) * (1.0 / 9007199254740992.0);
    }

    private static double groupedCounts(double p, double trials, long index) {
        double m = trials * p;
        double k = Math.floor(m + 3 * (uniform(index, 9) - 0.5) * Math.sqrt(m * (1 - p)));
        return Math.min(Math.max(k, 0), trials);
    }

    /** 400 patterns x 25,000 trials: ten million events, prevalence about 4 %. */
    static FitProblem tenMillion() {
        return bandedCounts(25000, 20, 0.03, 0.2, 0.8, 0.01, 1.9);
    }

    /** 200 patterns x 20,000 trials: four million events, prevalence 0.1 %. */
    static FitProblem rare() {
        return bandedCounts(20000, 10, 0.0003, 0.25, 1.5, 0.02, 1);
    }

    private static FitProblem bandedCounts(double trials, int weeks, double base, double bandEffect,
                                           double contactEffect, double weekEffect, double divisor) {
        Rows rows = new Rows(8);
        long i = 0;
        for (int band = 0; band < 5; band++) {
            for (int sex = 0; sex < 2; sex++) {
                for (int contact = 0; contact < 2; contact++) {
                    for (int week = 1; week <= weeks; week++) {
                        double p = base * (1 + bandEffect * band) * (1 + 0.3 * sex) * (1 + contactEffect * contact)
                                * (1 + weekEffect * week) / divisor;
                        rows.add(new double[] {1, band == 1 ? 1 : 0, band == 2 ? 1 : 0, band == 3 ? 1 : 0,
                                band == 4 ? 1 : 0, sex, contact, week}, trials, groupedCounts(p, trials, i++));
                    }
                }
            }
        }
        return rows.problem();
    }

    /** 50,000 single events: raw calendar year 2024..2028, raw age in days 365..31999, sex. */
    static FitProblem uncentered() {
        Rows rows = new Rows(4);
        for (long i = 0; i < 50000; i++) {
            double year = 2024 + Math.floor(5 * uniform(i, 1));
            double days = 365 + Math.floor(31635 * uniform(i, 2));
            double sex = Math.floor(2 * uniform(i, 3));
            double p = 0.04 + 0.03 * sex + 0.02 * (year - 2024) + 0.2 * (days / 32000);
            rows.add(new double[] {1, year, days, sex}, 1, uniform(i, 4) < p ? 1 : 0);
        }
        return rows.problem();
    }

    /** 40,000 single events: x1 in [-5, 5), x2 = x1 + 0.01 (u - 1/2), a three-level band. */
    static FitProblem collinear() {
        Rows rows = new Rows(5);
        for (long i = 0; i < 40000; i++) {
            double x1 = 10 * (uniform(i, 1) - 0.5);
            double x2 = x1 + 0.01 * (uniform(i, 2) - 0.5);
            double band = Math.floor(3 * uniform(i, 3));
            double p = 0.3 + 0.03 * x1 + 0.05 * (band - 1);
            rows.add(new double[] {1, x1, x2, band == 1 ? 1 : 0, band == 2 ? 1 : 0}, 1, uniform(i, 4) < p ? 1 : 0);
        }
        return rows.problem();
    }

    /**
     * A million single events (row storage): age in years 0..99 (raw), sex, a four-level region; prevalence
     * about 8 %.
     */
    static FitProblem million() {
        Rows rows = new Rows(6);
        for (long i = 0; i < 1_000_000; i++) {
            double age = Math.floor(100 * uniform(i, 1));
            double sex = Math.floor(2 * uniform(i, 2));
            double region = Math.floor(4 * uniform(i, 3));
            double p = 0.04 + 0.0006 * age + 0.02 * sex + 0.01 * region;
            rows.add(new double[] {1, age, sex, region == 1 ? 1 : 0, region == 2 ? 1 : 0, region == 3 ? 1 : 0}, 1,
                    uniform(i, 4) < p ? 1 : 0);
        }
        return rows.problem();
    }

    /** Collects rows of a fixed width. */
    private static final class Rows {
        private final int p;
        private final List<double[]> x = new ArrayList<>();
        private final List<double[]> counts = new ArrayList<>();

        Rows(int p) {
            this.p = p;
        }

        void add(double[] row, double trials, double positives) {
            x.add(row);
            counts.add(new double[] {trials, positives});
        }

        FitProblem problem() {
            int n = x.size();
            double[] design = new double[n * p];
            double[] trials = new double[n];
            double[] positives = new double[n];
            for (int i = 0; i < n; i++) {
                System.arraycopy(x.get(i), 0, design, i * p, p);
                trials[i] = counts.get(i)[0];
                positives[i] = counts.get(i)[1];
            }
            return FitProblem.of(n, p, design, trials, positives);
        }
    }
}
