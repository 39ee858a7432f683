package org.oddswatch.estimator.reference;

import static org.junit.jupiter.api.Assertions.fail;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import java.io.File;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * The external tools the live reference checks run (R's {@code Rscript} with packages, Python 3 with
 * modules), and what a check does when one is missing: it is skipped (a JUnit assumption), unless
 * the environment variable {@value #REQUIRE_VARIABLE} is {@code 1}; then it fails and names the
 * missing tool. CI sets the variable ({@code .ci/run} installs the tools first), so a live check
 * cannot be skipped there without anyone noticing. Shared with the other modules' tests through the
 * estimator's test jar.
 */
public final class ReferenceTools {

    /** Set to 1 to make a missing reference tool a test failure instead of a skipped test. */
    public static final String REQUIRE_VARIABLE = "ODDSWATCH_REQUIRE_REFERENCE_TOOLS";

    private ReferenceTools() {
    }

    /**
     * {@code Rscript} on the PATH, after checking that it loads every named package.
     *
     * @throws org.opentest4j.TestAbortedException when R or a package is missing (skip)
     * @throws AssertionError instead when {@value #REQUIRE_VARIABLE} is 1
     */
    public static Path rscript(String... packages) {
        Path rscript = onPath("Rscript");
        String what = packages.length == 0 ? "R (Rscript)" : "R (Rscript) with " + String.join(", ", packages);
        StringBuilder probe = new StringBuilder("invisible(0)");
        for (String p : packages) {
            probe.append("; suppressPackageStartupMessages(library(").append(p).append("))");
        }
        require(rscript != null && runs(rscript.toString(), "-e", probe.toString()), what);
        return rscript;
    }

    /**
     * A Python 3 that imports every named module: Debian's {@code /usr/bin/python3} first (where
     * {@code python3-statsmodels} installs), then {@code python3} on the PATH.
     *
     * @throws org.opentest4j.TestAbortedException when none does (skip)
     * @throws AssertionError instead when {@value #REQUIRE_VARIABLE} is 1
     */
    public static Path python(String... modules) {
        String imports = modules.length == 0 ? "pass" : "import " + String.join(", ", modules);
        List<Path> candidates = new ArrayList<>();
        candidates.add(Path.of("/usr/bin/python3"));
        Path onPath = onPath("python3");
        if (onPath != null) {
            candidates.add(onPath);
        }
        for (Path python : candidates) {
            if (Files.isExecutable(python) && runs(python.toString(), "-c", imports)) {
                return python;
            }
        }
        require(false, "Python 3 with " + String.join(", ", modules));
        return null;
    }

    /** Skips the calling test when {@code available} is false, or fails it when tools are required. */
    public static void require(boolean available, String what) {
        if (!available && "1".equals(System.getenv(REQUIRE_VARIABLE))) {
            fail(what + " is not installed, and " + REQUIRE_VARIABLE + "=1 requires every live reference check "
                    + "to run (on Debian: apt-get install r-base-core r-cran-brglm2 r-cran-spc python3-statsmodels)");
        }
        assumeTrue(available, what + " is not installed");
    }

    /** The first executable {@code tool} in a PATH folder, or null. */
    public static Path onPath(String tool) {
        for (String dir : System.getenv().getOrDefault("PATH", "").split(File.pathSeparator)) {
            Path candidate = Path.of(dir, tool);
            if (Files.isExecutable(candidate)) {
                return candidate;
            }
        }
        return null;
    }

    private static boolean runs(String... command) {
        try {
            Process p = new ProcessBuilder(command).redirectErrorStream(true)
                    .redirectOutput(ProcessBuilder.Redirect.DISCARD).start();
            if (!p.waitFor(120, TimeUnit.SECONDS)) {
                p.destroyForcibly();
                return false;
            }
            return p.exitValue() == 0;
        } catch (IOException e) {
            return false;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return false;
        }
    }
}
