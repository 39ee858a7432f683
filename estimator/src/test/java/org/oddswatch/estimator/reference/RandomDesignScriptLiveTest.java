package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Re-runs src/test/reference/random_designs.py (statsmodels, scipy, and R with brglm2 for the
 * separated designs) into a temporary folder and checks that it reproduces the committed
 * random-designs.csv: the same designs (seed, storage, size, column specification, design hash and
 * outcome counts exactly) and the same fits (coefficients and standard errors to 1e-9 relative, which
 * leaves room for another BLAS). Skipped where the tools are missing, failed instead under
 * {@code ODDSWATCH_REQUIRE_REFERENCE_TOOLS=1} ({@link ReferenceTools}). The script draws its designs
 * with numpy's {@code Generator}, whose streams numpy may change between versions: the fixture's
 * first line names the numpy it was made with.
 */
class RandomDesignScriptLiveTest {

    private static final int FIRST_FIT_FIELD = 10;

    @Test
    void theScriptReproducesTheCommittedFixture(@TempDir Path out) throws Exception {
        Path python = ReferenceTools.python("statsmodels", "scipy", "numpy");
        Path rscript = ReferenceTools.rscript("brglm2");
        Path script = Path.of("src/test/reference/random_designs.py");
        ProcessBuilder builder = new ProcessBuilder(python.toString(), script.toString(), out.toString())
                .redirectErrorStream(true).redirectOutput(out.resolve("log.txt").toFile());
        builder.environment().put("PATH", rscript.getParent() + java.io.File.pathSeparator
                + builder.environment().getOrDefault("PATH", ""));
        Process p = builder.start();
        assertTrue(p.waitFor(30, TimeUnit.MINUTES), "random_designs.py timed out");
        assertEquals(0, p.exitValue(), () -> "random_designs.py failed: " + read(out.resolve("log.txt")));
        List<String> committed = dataLines(Path.of("src/test/resources" + RandomDesigns.RESOURCE));
        List<String> generated = dataLines(out.resolve("random-designs.csv"));
        // Source: statsmodels GLM and brglm2, re-run here; the committed lines came from the same script.
        assertEquals(committed.size(), generated.size(), "design count");
        assertEquals(committed.get(0), generated.get(0), "header");
        for (int k = 1; k < committed.size(); k++) {
            String[] want = committed.get(k).split(",", -1);
            String[] got = generated.get(k).split(",", -1);
            assertEquals(want.length, got.length, "line " + k);
            for (int f = 0; f < FIRST_FIT_FIELD; f++) {
                assertEquals(want[f], got[f], "line " + k + " field " + f + " (the design itself)");
            }
            for (int f = FIRST_FIT_FIELD; f < want.length; f++) {
                String[] a = want[f].split(" ");
                String[] b = got[f].split(" ");
                assertEquals(a.length, b.length, "line " + k + " field " + f);
                for (int j = 0; j < a.length; j++) {
                    double x = Double.parseDouble(a[j]);
                    assertEquals(x, Double.parseDouble(b[j]), 1e-9 * Math.abs(x), "line " + k + " field " + f + " [" + j + "]");
                }
            }
        }
    }

    private static List<String> dataLines(Path file) throws IOException {
        return Files.readAllLines(file, StandardCharsets.UTF_8).stream().filter(l -> !l.startsWith("#")).toList();
    }

    private static String read(Path path) {
        try {
            return Files.readString(path);
        } catch (IOException e) {
            return "(unreadable: " + e.getMessage() + ")";
        }
    }
}
