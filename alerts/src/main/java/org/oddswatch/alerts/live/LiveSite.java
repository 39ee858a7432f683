package org.oddswatch.alerts.live;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.Base64;
import java.util.Map;
import java.util.function.Supplier;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.alerts.report.html.Html;
import org.oddswatch.alerts.report.html.HtmlReport;

/**
 * The live page at {@code /} and its {@link LiveApi} under {@code /api/}: what the service's HTTP
 * endpoints serve besides {@code /metrics}, {@code /health} and {@code /status}.
 *
 * <p>The page is built once from the jar (no network access needed): the report's shared head and
 * styles, Chart.js from its webjar with the report's chart look, and the page script, all inline. Its
 * Content-Security-Policy allows exactly those inline parts, by their SHA-256 hashes (no
 * {@code 'unsafe-inline'}), and requests to its own origin only ({@code connect-src 'self'}): the
 * page loads nothing from elsewhere and sends nothing elsewhere. It refreshes itself by fetching the
 * API every few seconds and updating the document, never by reloading.
 */
public final class LiveSite {

    /** The media type of the page. */
    public static final String HTML = "text/html; charset=utf-8";

    private final LiveApi api;
    private final String page;
    private final String policy;

    /**
     * @param history what the service published
     * @param status the service's status snapshot
     */
    public LiveSite(LiveHistory history, Supplier<?> status) {
        this.api = new LiveApi(history, status);
        String style = HtmlReport.resource("live.css");
        String script = HtmlReport.resource("live.js");
        String inPage = "default-src 'none'; script-src " + hash(HtmlReport.CHARTS) + " " + hash(script)
                + "; style-src " + hash(HtmlReport.style(style)) + "; connect-src 'self'; img-src data:;"
                + " base-uri 'none'; form-action 'none'";
        // frame-ancestors has effect only as a header (a <meta> policy may not carry it).
        this.policy = inPage + "; frame-ancestors 'none'";
        this.page = HtmlReport.fill(HtmlReport.resource("live.html"), Map.of(
                "head", HtmlReport.head("oddswatch live", "oddswatch service", inPage, style),
                "caution", Html.escape(AlertText.CAUTION),
                "chartjs", HtmlReport.CHARTS,
                "script", script));
    }

    /** The answer to a GET of {@code rawPath} with {@code rawQuery} (or null), or null when not this site's. */
    public WebAnswer answer(String rawPath, String rawQuery) {
        if (rawPath.equals("/")) {
            return new WebAnswer(200, HTML, page, policy);
        }
        return api.answer(rawPath, rawQuery);
    }

    /** The page's Content-Security-Policy (as sent in its header). */
    public String policy() {
        return policy;
    }

    /** A CSP source for an inline element whose text is {@code text}: {@code 'sha256-<base64>'}. */
    static String hash(String text) {
        try {
            byte[] digest = MessageDigest.getInstance("SHA-256").digest(text.getBytes(StandardCharsets.UTF_8));
            return "'sha256-" + Base64.getEncoder().encodeToString(digest) + "'";
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("every JDK has SHA-256", e);
        }
    }
}
