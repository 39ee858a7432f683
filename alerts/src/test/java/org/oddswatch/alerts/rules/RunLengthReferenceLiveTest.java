package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.reference.ReferenceTools;

/**
 * Live reference checks of the alert rules' numerics: R is run now (skipped where it is missing,
 * failed instead in CI, see {@link ReferenceTools}), so the committed check values in
 * {@link CusumRunLengthTest} and {@link StepScoreTest} are re-derived rather than trusted.
 */
class RunLengthReferenceLiveTest {

    @Test
    void normalCusumRunLengthsAndLimitsAgreeWithRsSpcPackage() throws Exception {
        Path rscript = ReferenceTools.rscript("spc");
        // Source: R package spc (Knoth), xcusum.arl / xcusum.crit, two-sided tabular CUSUM of N(mu, 1) data
        double[] r = numbers(run(rscript.toString(), "-e", "suppressPackageStartupMessages(library(spc)); cat(sprintf('%.10f',"
                + " c(xcusum.arl(k = 0.5, h = 4, mu = 0, sided = 'two'), xcusum.arl(k = 0.5, h = 5, mu = 0, sided = 'two'),"
                + " xcusum.arl(k = 1.54, h = 1.93, mu = 0, sided = 'two'), xcusum.arl(k = 1.11, h = 3.16, mu = 0, sided = 'two'),"
                + " xcusum.crit(k = 1.2, L0 = 500, mu0 = 0.3, sided = 'two'))), sep = ' ')"));
        assertEquals(r[0], CusumRunLength.normalTwoSided(4, 0.5, 0, 400), r[0] * 0.01);
        assertEquals(r[1], CusumRunLength.normalTwoSided(5, 0.5, 0, 400), r[1] * 0.01);
        // the limits the default budget derives for the house scenario's two watched terms
        assertEquals(r[2], CusumRunLength.normalTwoSided(1.93, 1.54, 0, CusumRunLength.BUDGET_GRID), r[2] * 0.01);
        assertEquals(r[3], CusumRunLength.normalTwoSided(3.16, 1.11, 0, CusumRunLength.BUDGET_GRID), r[3] * 0.01);
        assertEquals(r[4], CusumRunLength.normalTwoSidedLimit(500, 1.2, 0.3), 0.01);
    }

    @Test
    void stepScoreAgreesWithRsRaoScoreTest() throws Exception {
        Path rscript = ReferenceTools.rscript();
        Path script = Path.of("src", "test", "reference", "step_score.R").toAbsolutePath();
        // Source: R glm + anova(test = "Rao"), alerts/src/test/reference/step_score.R (same data as StepScoreTest)
        String out = run(rscript.toString(), script.toString());
        double signedRoot = Double.parseDouble(out.replaceAll("(?s).*signed root (-?[0-9.]+).*", "$1"));
        StepScore s = new StepScore();
        for (int i = 0; i < 60; i++) {
            s.add(-2 + 0.1 * (i % 7), i % 3 == 0 ? 1 : 0, i % 5 == 0 || i % 11 == 0);
        }
        assertEquals(signedRoot, s.score().z(), 1e-9);
    }

    private static double[] numbers(String text) {
        return Arrays.stream(text.trim().split("\\s+")).mapToDouble(Double::parseDouble).toArray();
    }

    private static String run(String... command) throws IOException, InterruptedException {
        Process p = new ProcessBuilder(command).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        if (!p.waitFor(120, TimeUnit.SECONDS) || p.exitValue() != 0) {
            throw new AssertionError(String.join(" ", command) + " failed: " + out);
        }
        return out;
    }
}
