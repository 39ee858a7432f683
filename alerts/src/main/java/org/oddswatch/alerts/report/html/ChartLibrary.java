package org.oddswatch.alerts.report.html;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.Locale;
import java.util.Properties;

/**
 * The Chart.js script inlined into {@code report.html}: the minified UMD build from the
 * {@code org.webjars.npm:chart.js} webjar on the classpath (its version from the webjar's own
 * {@code pom.properties}), with the source-map comment removed (the page is self-contained; a map
 * would be a request). Loaded once per JVM.
 */
final class ChartLibrary {

    private static final String WEBJAR = "META-INF/maven/org.webjars.npm/chart.js/pom.properties";

    /** The library's version, e.g. {@code 4.5.1}. */
    static final String VERSION;

    /** The minified script, safe to place inside a {@code <script>} element. */
    static final String SCRIPT;

    static {
        Properties properties = new Properties();
        try (InputStream in = resource(WEBJAR)) {
            properties.load(in);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        VERSION = properties.getProperty("version");
        String script;
        try (InputStream in = resource("META-INF/resources/webjars/chart.js/" + VERSION + "/dist/chart.umd.min.js")) {
            script = new String(in.readAllBytes(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        script = script.replaceAll("(?m)^//# sourceMappingURL=.*$", "").stripTrailing();
        String lower = script.toLowerCase(Locale.ROOT);
        if (lower.contains("</script") || lower.contains("<!--")) {
            throw new IllegalStateException("Chart.js " + VERSION + " contains </script or <!-- and cannot be inlined");
        }
        SCRIPT = script;
    }

    private ChartLibrary() {
    }

    private static InputStream resource(String name) throws IOException {
        InputStream in = ChartLibrary.class.getClassLoader().getResourceAsStream(name);
        if (in == null) {
            throw new IOException("the chart library is not on the classpath: " + name
                    + " (dependency org.webjars.npm:chart.js)");
        }
        return in;
    }
}
