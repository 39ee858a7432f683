package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.oddswatch.alerts.lifecycle.AlertText;

/**
 * Writes {@code comparison.html}: one self-contained page comparing rule settings tried on a replay,
 * built like {@link HtmlReport}'s page (its styles, Chart.js inline, a Content-Security-Policy that
 * allows no request, the data in a JSON island). The data island holds {@code settings} (name,
 * change, messages, episodes, firstRaised), {@code rules}, {@code counts} (per rule, messages per
 * setting) and {@code episodes} (per setting, each marked {@code added}, {@code removed} or not).
 * Deterministic: the same data gives a byte-identical file.
 */
public final class ComparisonReport {

    /** The file name in the tuning folder. */
    public static final String FILE = "comparison.html";

    private static final String TEMPLATE = HtmlReport.resource("comparison.html");
    private static final String SCRIPT = HtmlReport.resource("comparison.js");

    private ComparisonReport() {
    }

    /** Writes {@code dir/comparison.html} and returns its path. */
    public static Path write(Path dir, JsonNode data, String title) {
        Path file = dir.resolve(FILE);
        Map<String, String> parts = Map.of(
                "head", HtmlReport.head(title, "oddswatch tune"),
                "title", Html.escape(title),
                "caution", Html.escape(AlertText.CAUTION),
                "library", Html.escape("Chart.js " + ChartLibrary.VERSION),
                "chartjs", HtmlReport.CHARTS,
                "script", SCRIPT,
                "data", ScriptSafeJson.write(data));
        try {
            Files.createDirectories(dir);
            Files.writeString(file, HtmlReport.fill(TEMPLATE, parts), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + file, e);
        }
        return file;
    }
}
