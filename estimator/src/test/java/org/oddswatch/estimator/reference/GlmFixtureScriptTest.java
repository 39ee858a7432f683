package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import java.io.File;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Re-runs src/test/reference/glm_fixtures.R when Rscript (with brglm2 and MASS) is installed and
 * checks that it reproduces the committed fixtures (numbers to 1e-9 relative); skipped otherwise, or
 * failed under {@code ODDSWATCH_REQUIRE_REFERENCE_TOOLS=1} (see {@link ReferenceTools}).
 */
class GlmFixtureScriptTest {

    @Test
    void theScriptReproducesTheCommittedFixtures(@TempDir Path out) throws Exception {
        Path rscript = ReferenceTools.rscript("brglm2", "MASS");
        Path script = Path.of("src/test/reference/glm_fixtures.R");
        assumeTrue(Files.exists(script), "run from the estimator module directory");
        Process p = new ProcessBuilder(rscript.toString(), script.toString(), out.toString()).redirectErrorStream(true)
                .redirectOutput(new File(out.toFile(), "log.txt")).start();
        assertEquals(0, p.waitFor(), () -> "Rscript failed: " + read(out.resolve("log.txt")));
        Path committed = Path.of("src/test/resources/reference/glm");
        for (String name : List.of("grouped-data.csv", "grouped-fit.csv", "individual-data.csv", "individual-fit.csv",
                "rare-data.csv", "rare-fit.csv", "separated-data.csv", "separated-firth-fit.csv",
                "individual-lrt-profile.csv")) {
            assertSameNumbers(read(committed.resolve(name)), read(out.resolve(name)), name);
        }
    }

    /** Same lines apart from '#' comments (which name the R version), numbers equal to 1e-9 relative. */
    private static void assertSameNumbers(String expected, String actual, String name) {
        List<String> e = expected.lines().filter(l -> !l.startsWith("#")).toList();
        List<String> a = actual.lines().filter(l -> !l.startsWith("#")).toList();
        assertEquals(e.size(), a.size(), name + " line count");
        for (int k = 0; k < e.size(); k++) {
            String[] et = e.get(k).split(",");
            String[] at = a.get(k).split(",");
            assertEquals(et.length, at.length, name + " line " + k);
            for (int t = 0; t < et.length; t++) {
                try {
                    double ev = Double.parseDouble(et[t]);
                    assertEquals(ev, Double.parseDouble(at[t]), 1e-9 * Math.max(1, Math.abs(ev)), name + " " + k);
                } catch (NumberFormatException text) {
                    assertEquals(et[t], at[t], name + " line " + k);
                }
            }
        }
    }

    private static String read(Path path) {
        try {
            return Files.readString(path);
        } catch (IOException e) {
            return "(unreadable: " + e.getMessage() + ")";
        }
    }
}
