package org.oddswatch.alerts.report.html;

import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Writes {@code report.html} for a replay folder: one self-contained page (styles, the Chart.js
 * script from its webjar, the page script and the data all inline; a Content-Security-Policy that
 * allows no request at all) that a person opens in a browser.
 *
 * <p>Per stream it charts prevalence with its interval (and by stratum), each watched odds ratio with
 * its Wald interval (and profile interval where computed), the baseline value and the alert markers
 * (raised, continuing, cleared), calibration observed/expected and slope with their intervals and the
 * limits the alerts carry, each CUSUM path with its limit, events, positives and rejects by reason per
 * window, and the notes of windows whose fit was not {@code converged}. An alerts table links each
 * alert to its chart; a stream filter sits at the top; the investigation caution is on the page.
 *
 * <p>Small cells: what the project's {@link org.oddswatch.alerts.privacy.SmallCellPolicy} withholds
 * from a window (small counts and every figure resting on them) is left out of the page's data; it is
 * never charted. Deterministic: the same
 * inputs give a byte-identical file.
 */
public final class HtmlReport {

    /** The file name in the replay folder. */
    public static final String FILE = "report.html";

    private static final String TEMPLATE = resource("report.html");
    private static final String HEAD = resource("page-head.html");
    private static final String STYLE = resource("report.css");
    private static final String SCRIPT = resource("report.js");
    /** Chart.js followed by the chart look both pages share. */
    public static final String CHARTS = ChartLibrary.SCRIPT + "\n" + resource("chart-look.js");
    private static final Pattern PLACEHOLDER = Pattern.compile("\\{\\{(\\w+)}}");

    private HtmlReport() {
    }

    /**
     * Writes {@code dir/report.html} (creating {@code dir}) and returns its path.
     *
     * @param estimates window estimates (only final ones are charted)
     * @param alerts the alerts of the replay
     * @param title the page title
     * @param options small-cell limit, rejects and rule settings
     */
    public static Path write(Path dir, List<WindowEstimate> estimates, List<Alert> alerts, String title,
                             ReportOptions options) {
        Path file = dir.resolve(FILE);
        try {
            Files.createDirectories(dir);
            Files.writeString(file, render(estimates, alerts, title, options), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + file, e);
        }
        return file;
    }

    /** The page text. */
    public static String render(List<WindowEstimate> estimates, List<Alert> alerts, String title,
                                ReportOptions options) {
        String shownTitle = title == null || title.isBlank() ? "oddswatch replay" : title;
        int withholdBelow = options.cells().limit();
        String data = ScriptSafeJson.write(ReportData.build(estimates, alerts, shownTitle, options));
        Map<String, String> parts = Map.of(
                "head", head(shownTitle, "oddswatch replay"),
                "title", Html.escape(shownTitle),
                "caution", Html.escape(AlertText.CAUTION),
                "withheld", Html.escape("Counts from 1 to " + (withholdBelow - 1)
                        + ", and figures resting on them, are withheld and not charted (small-cell rule;"
                        + " local disclosure rules govern)."),
                "library", Html.escape("Chart.js " + ChartLibrary.VERSION),
                "chartjs", CHARTS,
                "script", SCRIPT,
                "data", data);
        return fill(TEMPLATE, parts);
    }

    /** The policy of the pages written to files: inline scripts and styles only, no request at all. */
    static final String FILE_POLICY = "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data:";

    /** The pages' shared head (doctype to {@code </head>}: the policy allowing no request, title, styles). */
    static String head(String title, String generator) {
        return head(title, generator, FILE_POLICY, "");
    }

    /**
     * The shared head with another Content-Security-Policy and styles added after the shared ones
     * (the live page, which is served and allows requests to its own origin only).
     */
    public static String head(String title, String generator, String policy, String moreStyle) {
        return fill(HEAD, Map.of("title", Html.escape(title), "generator", Html.escape(generator), "style",
                style(moreStyle), "policy", policy));
    }

    /** The style text {@link #head(String, String, String, String)} inlines (for a policy's hash). */
    public static String style(String moreStyle) {
        return moreStyle.isEmpty() ? STYLE : STYLE + "\n" + moreStyle;
    }

    /** Replaces each {@code {{name}}} of {@code template} in one pass (inserted text is never re-read). */
    public static String fill(String template, Map<String, String> parts) {
        Matcher m = PLACEHOLDER.matcher(template);
        StringBuilder b = new StringBuilder(template.length() + parts.values().stream().mapToInt(String::length).sum());
        while (m.find()) {
            String part = parts.get(m.group(1));
            if (part == null) {
                throw new IllegalStateException("unknown placeholder " + m.group());
            }
            m.appendReplacement(b, Matcher.quoteReplacement(part));
        }
        m.appendTail(b);
        return b.toString();
    }

    public static String resource(String name) {
        try (InputStream in = HtmlReport.class.getResourceAsStream(name)) {
            if (in == null) {
                throw new IllegalStateException("missing resource " + name);
            }
            return new String(in.readAllBytes(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
