package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.lang.management.ThreadMXBean;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.fit.SeparationCheck;

/**
 * The time of the exact separation check on every design of random-designs.csv: the thread's CPU time of
 * each {@link SeparationCheck#check} call (after one warm-up pass over all designs), the 10 slowest
 * designs, the total, and the verdicts against HiGHS (contradictions and undecided designs). Run with
 * {@code mvn -B -Pbench -pl estimator -am verify -Dtest=SeparationCheckDesignsBenchmark -Dsurefire.failIfNoSpecifiedTests=false};
 * writes {@code target/benchmark-separation-designs.md}.
 */
@Tag("benchmark")
class SeparationCheckDesignsBenchmark {

    private record Timing(RandomDesigns design, long cpuNanos, SeparationCheck.Outcome outcome) {
    }

    @Test
    void everyDesignsCheckIsTimed() throws IOException {
        List<RandomDesigns> designs = RandomDesigns.load();
        ThreadMXBean bean = ManagementFactory.getThreadMXBean();
        for (RandomDesigns d : designs) {
            SeparationCheck.check(d.problem());
        }
        List<Timing> timings = new ArrayList<>();
        for (RandomDesigns d : designs) {
            var problem = d.problem();
            long start = bean.getCurrentThreadCpuTime();
            SeparationCheck.Outcome outcome = SeparationCheck.check(problem);
            timings.add(new Timing(d, bean.getCurrentThreadCpuTime() - start, outcome));
        }
        List<String> wrong = new ArrayList<>();
        List<Integer> undecided = new ArrayList<>();
        long total = 0;
        for (Timing t : timings) {
            total += t.cpuNanos;
            // Source: scipy.optimize.linprog (HiGHS) in random_designs.py, as in RandomDesignReferenceTest.
            SeparationCheck.Verdict want = t.design.reference().equals("firth") ? SeparationCheck.Verdict.SEPARATED
                    : SeparationCheck.Verdict.NONE;
            if (t.outcome.verdict() == SeparationCheck.Verdict.UNDECIDED) {
                undecided.add(t.design.id());
            } else if (t.outcome.verdict() != want) {
                wrong.add(t.design.id() + ": " + t.outcome.verdict());
            }
        }
        List<String> lines = new ArrayList<>();
        lines.add(String.format(Locale.ROOT, "designs %d, total CPU %.1f ms, undecided %d %s, contradictions %d %s",
                timings.size(), total / 1e6, undecided.size(), undecided, wrong.size(), wrong));
        lines.add("| design | storage | columns | rows | verdict | rounds | points | CPU ms |");
        lines.add("|---|---|---|---|---|---|---|---|");
        timings.stream().sorted(Comparator.comparingLong(Timing::cpuNanos).reversed()).limit(10).forEach(t -> lines.add(
                String.format(Locale.ROOT, "| %d | %s | %d | %d | %s | %d | %d | %.1f |", t.design.id(),
                        t.design.storage(), t.design.columns(), t.design.rows(), t.outcome.verdict(),
                        t.outcome.rounds(), t.outcome.points(), t.cpuNanos / 1e6)));
        lines.forEach(System.out::println);
        Files.write(Path.of("target", "benchmark-separation-designs.md"), lines);
        assertEquals(List.of(), wrong, "designs where the separation check contradicts HiGHS");
    }
}
