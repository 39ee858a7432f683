package org.oddswatch.estimator.prevalence;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.File;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.oddswatch.estimator.reference.ReferenceTools;

/**
 * Re-runs each R script under src/test/reference/ into a temporary folder and checks that it
 * reproduces the committed fixtures (numbers to 1e-9 relative, text exactly, comment lines
 * skipped). Skips when {@code Rscript} is not installed (fails instead under
 * {@code ODDSWATCH_REQUIRE_REFERENCE_TOOLS=1}, as in CI); the committed fixtures keep the other tests
 * independent of R.
 */
class ReferenceScriptsLiveTest {

    private static final Path SCRIPTS = Path.of("src", "test", "reference");
    private static final Path FIXTURES = Path.of("src", "test", "resources", "reference");

    @TempDir
    Path out;

    @ParameterizedTest
    @ValueSource(strings = {"binomial_intervals.R", "tables_and_adjustment.R", "calibration.R"})
    void scriptReproducesTheCommittedFixtures(String script) throws Exception {
        Path rscript = ReferenceTools.rscript();
        Process process = new ProcessBuilder(rscript.toString(), SCRIPTS.resolve(script).toString(), out.toString())
                .redirectErrorStream(true).redirectOutput(out.resolve("r.log").toFile()).start();
        assertTrue(process.waitFor(120, TimeUnit.SECONDS), script + " timed out");
        assertEquals(0, process.exitValue(), script + ": " + Files.readString(out.resolve("r.log")));
        int compared = 0;
        for (File generated : out.toFile().listFiles((dir, name) -> name.endsWith(".csv"))) {
            compare(FIXTURES.resolve(generated.getName()), generated.toPath());
            compared++;
        }
        assertTrue(compared > 0, script + " wrote no fixture");
    }

    private static void compare(Path committed, Path generated) throws IOException {
        List<String> want = dataLines(committed);
        List<String> got = dataLines(generated);
        assertEquals(want.size(), got.size(), committed + ": line count");
        for (int i = 0; i < want.size(); i++) {
            String[] a = want.get(i).split(",", -1);
            String[] b = got.get(i).split(",", -1);
            assertEquals(a.length, b.length, committed + " line " + i);
            for (int j = 0; j < a.length; j++) {
                if (isNumber(a[j]) && isNumber(b[j])) {
                    double x = Double.parseDouble(a[j]);
                    double y = Double.parseDouble(b[j]);
                    assertEquals(x, y, 1e-9 * Math.max(1e-300, Math.abs(x)), committed + " line " + i + " cell " + j);
                } else {
                    assertEquals(a[j], b[j], committed + " line " + i + " cell " + j);
                }
            }
        }
    }

    private static List<String> dataLines(Path file) throws IOException {
        return Files.readAllLines(file, StandardCharsets.UTF_8).stream().filter(l -> !l.startsWith("#")).toList();
    }

    private static boolean isNumber(String s) {
        try {
            Double.parseDouble(s);
            return true;
        } catch (NumberFormatException e) {
            return false;
        }
    }
}
