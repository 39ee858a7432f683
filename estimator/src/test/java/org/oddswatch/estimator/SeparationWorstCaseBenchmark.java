package org.oddswatch.estimator;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.lang.management.ThreadMXBean;
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
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.fit.FirthFitter;
import org.oddswatch.estimator.fit.ModelFitter;
import org.oddswatch.estimator.fit.NewtonFitter;
import org.oddswatch.estimator.fit.SeparationCheck;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.window.WindowData;
import org.oddswatch.estimator.window.WindowStore;

/**
 * The worst case of a window estimate: a divergent-looking fit, which runs the Newton fit (warm, then
 * cold), the exact separation check and the Firth refit with profile intervals and LR tests of the
 * watched terms. House scenario with the numeric term (row storage, 11 columns) and no positive at all in
 * one region (quasi-complete separation), at 4,000 events (4,000 points for the separation programme)
 * and at 1,000,000 events. The Newton attempt, the check and the Firth refit are also timed alone. Run with
 * {@code mvn -B -Pbench -pl estimator -am verify -Dtest=SeparationWorstCaseBenchmark -Dsurefire.failIfNoSpecifiedTests=false};
 * writes {@code target/benchmark-separation.md}. Times are medians of repeated runs after warm-up; the
 * largest run is given beside.
 */
@Tag("benchmark")
class SeparationWorstCaseBenchmark {

    @Test
    void worstCaseWindowEstimate() throws IOException {
        List<String> lines = new ArrayList<>();
        lines.add("| figure | 4,000 events (row storage) | 1,000,000 events (row storage) |");
        lines.add("|---|---|---|");
        Case small = measure(4_000, 21, 5);
        Case large = measure(1_000_000, 5, 1);
        row(lines, "points in the separation programme (pattern, outcome)", small.points, large.points);
        row(lines, "fit state of the estimate", small.state, large.state);
        row(lines, "window estimate, median wall ms (WindowEstimator.estimate, warm start)", small.estimateMs[0],
                large.estimateMs[0]);
        row(lines, "window estimate, largest wall ms", small.estimateMs[1], large.estimateMs[1]);
        row(lines, "window estimate, median CPU ms of the thread", small.estimateMs[2], large.estimateMs[2]);
        row(lines, "window estimate, largest CPU ms", small.estimateMs[3], large.estimateMs[3]);
        row(lines, "  of which: model fit (ModelFitter.fit: Newton attempt, check, Firth), median CPU ms",
                small.modelMs, large.modelMs);
        row(lines, "  of which: separation check alone, median CPU ms", small.checkMs, large.checkMs);
        row(lines, "  separation check rounds / points in the last programme", small.rounds, large.rounds);
        row(lines, "  of which: Firth refit alone, median CPU ms", small.firthMs, large.firthMs);
        row(lines, "  rest: profile penalized-likelihood intervals and LR tests of 2 watched terms, CPU ms",
                small.estimateMs[2] - small.modelMs, large.estimateMs[2] - large.modelMs);
        lines.add("");
        lines.add("Machine: " + EstimatorBenchmarkMachine.describe() + ". Command: `mvn -B -Pbench -pl estimator -am "
                + "verify -Dtest=SeparationWorstCaseBenchmark -Dsurefire.failIfNoSpecifiedTests=false`.");
        String table = String.join("\n", lines) + "\n";
        System.out.println(table);
        Path out = Path.of("target", "benchmark-separation.md");
        Files.createDirectories(out.getParent());
        Files.writeString(out, "# Worst-case window estimate (separation)\n\n" + table);
    }

    private record Case(int points, String state, double[] estimateMs, double modelMs, double checkMs, String rounds,
                        double firthMs) {
    }

    private static Case measure(int events, int reps, int warmup) {
        DesignCoder coder = HouseScenario.coder(true);
        WindowStore store = new WindowStore(coder, 4096, 4);
        HouseScenario scenario = new HouseScenario(11, true, 0);
        double[] row = new double[coder.width()];
        for (int k = 0; k < events; k++) {
            HouseScenario.Event e = scenario.next();
            // No positive in the west: a zero cell, quasi-complete separation by region.
            boolean west = "west".equals(e.raw()[3]);
            HouseScenario.add(coder, store, 0, new HouseScenario.Event(e.raw(), e.positive() && !west), row);
        }
        WindowData data = store.window(0, 1);
        FitProblem problem = FitProblem.of(data.rows(), data.columns(), data.x(), data.trials(), data.positives());
        WindowEstimator estimator = new WindowEstimator(coder, EstimatorOptions.defaults());
        // The previous window's estimates as warm start: here the cold fit's last iterate.
        double[] warm = NewtonFitter.fit(problem, null, FitControl.defaults()).coefficients();
        WindowEstimate[] estimate = new WindowEstimate[1];
        double[] estimateMs = times(warmup, reps, () -> estimate[0] = estimator.estimate("bench", Instant.EPOCH,
                Instant.EPOCH, WindowStatus.FINAL, data, warm, null));
        assertEquals(FitState.SEPARATION, estimate[0].fit().state());
        double modelMs = times(warmup, reps, () -> ModelFitter.fit(problem, warm, FitControl.defaults()))[2];
        SeparationCheck.Outcome[] outcome = new SeparationCheck.Outcome[1];
        double checkMs = times(warmup, reps, () -> outcome[0] = SeparationCheck.check(problem))[2];
        assertEquals(SeparationCheck.Verdict.SEPARATED, outcome[0].verdict());
        FitControl firthControl = FitControl.defaults().withMaxIterations(100);
        FitResult[] firth = new FitResult[1];
        double firthMs = times(warmup, reps, () -> firth[0] = FirthFitter.fit(problem, warm, firthControl))[2];
        int points = 0;
        for (int i = 0; i < data.rows(); i++) {
            points += (data.positives()[i] > 0 ? 1 : 0) + (data.trials()[i] > data.positives()[i] ? 1 : 0);
        }
        return new Case(points, estimate[0].fit().state().toString(), estimateMs, modelMs, checkMs,
                outcome[0].rounds() + " / " + outcome[0].points(), firthMs);
    }

    /**
     * {median, largest} wall time and {median, largest} CPU time of this thread, in ms. On a shared
     * machine the CPU time is the figure that other jobs do not inflate (much).
     */
    private static double[] times(int warmup, int reps, Runnable task) {
        ThreadMXBean bean = ManagementFactory.getThreadMXBean();
        for (int k = 0; k < warmup; k++) {
            task.run();
        }
        double[] wall = new double[reps];
        double[] cpu = new double[reps];
        for (int k = 0; k < reps; k++) {
            long c0 = bean.getCurrentThreadCpuTime();
            long t0 = System.nanoTime();
            task.run();
            wall[k] = (System.nanoTime() - t0) / 1e6;
            cpu[k] = (bean.getCurrentThreadCpuTime() - c0) / 1e6;
        }
        Arrays.sort(wall);
        Arrays.sort(cpu);
        return new double[] {wall[reps / 2], wall[reps - 1], cpu[reps / 2], cpu[reps - 1]};
    }

    private static void row(List<String> lines, String name, Object a, Object b) {
        lines.add("| " + name + " | " + format(a) + " | " + format(b) + " |");
    }

    private static String format(Object v) {
        return v instanceof Double d ? String.format(Locale.ROOT, d < 10 ? "%.2f" : "%.0f", d) : String.valueOf(v);
    }
}
