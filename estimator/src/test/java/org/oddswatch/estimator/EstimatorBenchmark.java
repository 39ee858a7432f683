package org.oddswatch.estimator;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.FitControl;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.fit.FitResult;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.window.WindowData;
import org.oddswatch.estimator.window.WindowStore;

/**
 * Estimator speed and memory: a 1,000,000-event 28-day window of the house scenario (contact, 5 age
 * bands, sex, 4 regions: 10 columns) as pattern counts and, with one continuous numeric term, as
 * rows; warm refit after a one-step slide versus cold; 365 daily steps; bytes per event. Run with
 * {@code mvn -B -Pbench -pl estimator verify}. Prints a table and writes it to
 * {@code target/benchmark-estimator.md}. Times are medians of repeated runs after warm-up.
 */
@Tag("benchmark")
class EstimatorBenchmark {

    private static final int WIDTH = 28;
    private static final int MILLION = 1_000_000;
    private static final int PATTERN_LIMIT = 4096;

    private final List<String> lines = new ArrayList<>();

    @Test
    void estimatorFigures() throws IOException {
        lines.add("| figure | pattern counts (10 columns) | row storage (+1 numeric term, 11 columns) |");
        lines.add("|---|---|---|");
        Window patterns = slideOneStep(false);
        Window rows = slideOneStep(true);
        row("distinct rows in the window", patterns.data.rows(), rows.data.rows());
        row("bytes per event held (WindowStore.approximateBytes / events)", patterns.bytesPerEvent,
                rows.bytesPerEvent);
        row("window assembly after the slide, ms (WindowStore.window)", patterns.assemblyMs, rows.assemblyMs);
        row("warm refit after a one-step slide, ms (NewtonFitter.fit)", patterns.warmMs, rows.warmMs);
        row("warm refit, Newton iterations", patterns.warm.iterations(), rows.warm.iterations());
        row("cold refit, ms", patterns.coldMs, rows.coldMs);
        row("cold refit, Newton iterations", patterns.cold.iterations(), rows.cold.iterations());
        row("full window estimate, warm, ms (WindowEstimator.estimate incl. profile intervals + LR tests of the watched terms: 1 with patterns, 2 with rows)",
                patterns.estimateMs, rows.estimateMs);
        double[] daily = dailySteps();
        lines.add("");
        lines.add("| 365 daily steps of a 28-day window (pattern counts, ~3,000 events a day, stationary truth) "
                + "| value |");
        lines.add("|---|---|");
        lines.add(String.format(Locale.ROOT, "| median Newton iterations per refit, warm start | %.1f |", daily[0]));
        lines.add(String.format(Locale.ROOT, "| median Newton iterations per refit, cold start | %.1f |", daily[1]));
        lines.add(String.format(Locale.ROOT, "| largest iterations, warm / cold | %.0f / %.0f |", daily[2], daily[3]));
        lines.add(String.format(Locale.ROOT, "| largest coefficient difference warm vs cold over all steps | %.2e |",
                daily[4]));
        lines.add("");
        lines.add("Machine: " + EstimatorBenchmarkMachine.describe() + ". Command: `mvn -B -Pbench -pl estimator verify`.");
        lines.add("Load average when the figures were taken (1, 5, 15 min): " + EstimatorBenchmarkMachine.loadAverage()
                + " (other jobs shared the machine; times are medians).");
        String table = String.join("\n", lines) + "\n";
        System.out.println(table);
        Path out = Path.of("target", "benchmark-estimator.md");
        Files.createDirectories(out.getParent());
        Files.writeString(out, "# Estimator benchmark\n\n" + table);
        assertTrue(daily[4] < 1e-9, "warm and cold refits agree");
    }

    /** A window, its store's footprint, and timings of the refit after sliding one step. */
    private record Window(WindowData data, double bytesPerEvent, double assemblyMs, FitResult warm, double warmMs,
                          FitResult cold, double coldMs, double estimateMs) {
    }

    private static Window slideOneStep(boolean numeric) {
        DesignCoder coder = HouseScenario.coder(numeric);
        WindowStore store = new WindowStore(coder, PATTERN_LIMIT, 4);
        HouseScenario scenario = new HouseScenario(2026, numeric, 0);
        double[] row = new double[coder.width()];
        int perDay = MILLION / WIDTH + 1;
        for (int b = 0; b <= WIDTH; b++) {
            for (int k = 0; k < perDay; k++) {
                HouseScenario.add(coder, store, b, scenario.next(), row);
            }
        }
        FitResult previous = fit(store.window(0, WIDTH), null);
        store.expireBefore(1);
        double bytes = (double) store.approximateBytes() / (WIDTH * perDay);
        WindowData[] holder = new WindowData[1];
        double assembly = medianMs(numeric ? 3 : 10, numeric ? 7 : 51, () -> holder[0] = store.window(1, WIDTH + 1));
        WindowData data = holder[0];
        assertEquals(WIDTH * perDay, data.events());
        FitResult[] warm = new FitResult[1];
        FitResult[] cold = new FitResult[1];
        int reps = numeric ? 9 : 2001;
        int warmup = numeric ? 3 : 500;
        double warmMs = medianMs(warmup, reps, () -> warm[0] = fit(data, previous.coefficients()));
        double coldMs = medianMs(warmup, reps, () -> cold[0] = fit(data, null));
        assertTrue(warm[0].warmStartUsed() && warm[0].converged() && cold[0].converged());
        for (int j = 0; j < coder.width(); j++) {
            assertEquals(cold[0].coefficients()[j], warm[0].coefficients()[j], 1e-9);
        }
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults());
        double estimateMs = medianMs(numeric ? 1 : 20, numeric ? 3 : 101, () -> estimator.estimate("bench", Instant.EPOCH,
                Instant.EPOCH, WindowStatus.FINAL, data, previous.coefficients(), null));
        return new Window(data, bytes, assembly, warm[0], warmMs, cold[0], coldMs, estimateMs);
    }

    /** {median warm iterations, median cold iterations, max warm, max cold, max |warm - cold|}. */
    private static double[] dailySteps() {
        DesignCoder coder = HouseScenario.coder(false);
        WindowStore store = new WindowStore(coder, PATTERN_LIMIT, 4);
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults().withProfileIntervals(false));
        double[] row = new double[coder.width()];
        int[] warmIterations = new int[365];
        int[] coldIterations = new int[365];
        double maxDiff = 0;
        double[] warm = null;
        HouseScenario scenario = new HouseScenario(365, false, 0);
        for (int day = 0; day < WIDTH + 365; day++) {
            for (int k = 0; k < 3000; k++) {
                HouseScenario.add(coder, store, day, scenario.next(), row);
            }
            if (day < WIDTH - 1) {
                continue;
            }
            long end = day + 1;
            store.expireBefore(end - WIDTH);
            WindowData data = store.window(end - WIDTH, end);
            WindowEstimate w = estimator.estimate("s", Instant.EPOCH, Instant.EPOCH, WindowStatus.FINAL, data, warm,
                    null);
            WindowEstimate c = estimator.estimate("s", Instant.EPOCH, Instant.EPOCH, WindowStatus.FINAL, data, null,
                    null);
            int step = day - (WIDTH - 1);
            if (step < 365) {
                warmIterations[step] = w.fit().iterations();
                coldIterations[step] = c.fit().iterations();
            }
            double[] a = estimator.coefficientVector(w);
            double[] b = estimator.coefficientVector(c);
            for (int j = 0; j < a.length; j++) {
                maxDiff = Math.max(maxDiff, Math.abs(a[j] - b[j]));
            }
            warm = a;
        }
        // The first step has no previous window: it starts cold, like the live service's first window.
        return new double[] {median(Arrays.copyOfRange(warmIterations, 1, 365)), median(coldIterations),
                Arrays.stream(warmIterations, 1, 365).max().orElse(0), Arrays.stream(coldIterations).max().orElse(0),
                maxDiff};
    }

    private static FitResult fit(WindowData d, double[] start) {
        return NewtonFitter.fit(FitProblem.of(d.rows(), d.columns(), d.x(), d.trials(), d.positives()), start,
                FitControl.defaults());
    }

    private static double medianMs(int warmup, int reps, Runnable task) {
        for (int k = 0; k < warmup; k++) {
            task.run();
        }
        double[] times = new double[reps];
        for (int k = 0; k < reps; k++) {
            long t0 = System.nanoTime();
            task.run();
            times[k] = (System.nanoTime() - t0) / 1e6;
        }
        Arrays.sort(times);
        return times[reps / 2];
    }

    private static double median(int[] values) {
        int[] v = values.clone();
        Arrays.sort(v);
        int n = v.length;
        return n % 2 == 1 ? v[n / 2] : (v[n / 2 - 1] + v[n / 2]) / 2.0;
    }

    private void row(String name, Object a, Object b) {
        lines.add("| " + name + " | " + format(a) + " | " + format(b) + " |");
    }

    private static String format(Object v) {
        return v instanceof Double d ? (d < 0.1 ? String.format(Locale.ROOT, "%.4f", d)
                : String.format(Locale.ROOT, "%.2f", d)) : String.valueOf(v);
    }
}
