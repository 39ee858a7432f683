package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.report.html.ComparisonReport;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.openqa.selenium.By;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.chrome.ChromeDriver;

/**
 * {@code oddswatch tune}'s {@code comparison.html} in headless Chromium with the network off: three
 * settings (the replay's own definition, a lower odds-ratio drift limit, a higher CUSUM limit) on a
 * replay of the respiratory scenario. Checks, against the files the command wrote, that the settings
 * table has one row per line of {@code settings.jsonl}, that the bar chart has one group per setting
 * whose drawn bar heights are each setting's alert messages by rule (counted from its
 * {@code alerts.jsonl}), and that each setting's episodes are marked added or removed exactly where
 * its raised episodes differ from the replay's; no script error is logged and nothing is requested.
 * Saves {@code target/comparison-screenshot.png}. Skips where Chromium is absent (see
 * {@link ReplayReportBrowserTest}).
 */
class ComparisonPageBrowserTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");

    @TempDir
    Path dir;

    @Test
    void theComparisonPageChartsEachSettingsMessagesByRuleAndMarksAddedAndRemovedEpisodes() throws Exception {
        ChromeDriver driver = ReplayReportBrowserTest.offlineChromium(dir);
        try {
            Path out = tune();
            Path page = out.resolve(ComparisonReport.FILE);
            driver.get(page.toUri().toString());
            ReplayReportBrowserTest.waitUntilReady(driver);
            assertEquals(List.of(), ReplayReportBrowserTest.severe(driver), "script errors or blocked requests");
            assertEquals(0L, driver.executeScript("return performance.getEntriesByType('resource').length;"));

            List<JsonNode> settings = new ArrayList<>();
            for (String line : Files.readAllLines(out.resolve(TuneCommand.SETTINGS), StandardCharsets.UTF_8)) {
                settings.add(Json.mapper().readTree(line));
            }
            List<WebElement> rows = driver.findElements(By.cssSelector("#settings-table tbody tr"));
            assertEquals(settings.size(), rows.size(), "one table row per line of settings.jsonl");
            for (int i = 0; i < settings.size(); i++) {
                List<String> cells = rows.get(i).findElements(By.tagName("td")).stream().map(WebElement::getText).toList();
                JsonNode s = settings.get(i);
                assertEquals(s.get("name").asText(), cells.get(0));
                assertEquals(s.get("definition").asText(), cells.get(1));
                assertEquals(s.get("messages").asText(), cells.get(2));
                assertEquals(s.get("episodes").asText(), cells.get(3));
                assertEquals(s.get("firstRaised").get("windowEnd").asText(), cells.get(4).substring(cells.get(4).lastIndexOf(' ') + 1));
            }

            // Drawn bars: per rule, the value each bar's top stands for, read back through the chart's y scale.
            JsonNode chart = Json.mapper().readTree((String) driver.executeScript("""
                    var c = Chart.getChart(document.querySelector('#by-rule canvas'));
                    return JSON.stringify({ labels: c.data.labels, width: c.width, datasets: c.data.datasets.map(function (d, i) {
                      return { rule: d.label, heights: c.getDatasetMeta(i).data.map(function (bar) {
                        return Math.round(c.scales.y.getValueForPixel(bar.y)); }) }; }) });"""));
            assertTrue(chart.get("width").asInt() > 200, "canvas laid out");
            assertEquals(settings.stream().map(s -> s.get("name").asText()).toList(),
                    Json.mapper().convertValue(chart.get("labels"), List.class), "one bar group per setting");
            Map<String, List<Integer>> drawn = new TreeMap<>();
            chart.get("datasets").forEach(d -> drawn.put(d.get("rule").asText(),
                    Json.mapper().convertValue(d.get("heights"), List.class)));
            Map<String, List<Integer>> expected = new TreeMap<>();
            for (int i = 0; i < settings.size(); i++) {
                List<JsonNode> alerts = alerts(out.resolve("setting-" + (i + 1)).resolve(ReplayRunner.ALERTS));
                assertEquals(settings.get(i).get("messages").asInt(), alerts.size());
                for (JsonNode a : alerts) {
                    List<Integer> byRule = expected.computeIfAbsent(a.get("rule").asText(),
                            k -> new ArrayList<>(Collections.nCopies(settings.size(), 0)));
                    byRule.set(i, byRule.get(i) + 1);
                }
            }
            assertEquals(expected, drawn, "bar heights: alert messages per setting by rule");
            assertTrue(expected.size() > 1, "more than one rule alerts: " + expected.keySet());

            // Added / removed: raised episodes of a setting against the replay's.
            Set<String> base = raised(alerts(out.getParent().resolve("replay").resolve(ReplayRunner.ALERTS)));
            int marked = 0;
            for (int i = 0; i < settings.size(); i++) {
                Set<String> mine = raised(alerts(out.resolve("setting-" + (i + 1)).resolve(ReplayRunner.ALERTS)));
                Set<String> added = new TreeSet<>(mine);
                added.removeAll(base);
                Set<String> removed = new TreeSet<>(base);
                removed.removeAll(mine);
                assertEquals(added, shown(driver, i, "added"), "added in setting-" + (i + 1));
                assertEquals(removed, shown(driver, i, "removed"), "removed in setting-" + (i + 1));
                marked += added.size() + removed.size();
            }
            assertTrue(marked > 0, "the other limits add or remove episodes");
            assertTrue(driver.findElement(By.cssSelector(".caution")).getText().contains("not a diagnosis or proof of cause"));

            driver.executeScript("window.scrollTo(0, 0);");
            ReplayReportBrowserTest.screenshot(driver, "comparison-screenshot.png");
        } finally {
            driver.quit();
        }
    }

    /** The episode rows of setting {@code i} marked {@code mark}, as "stream rule subject windowEnd". */
    private static Set<String> shown(ChromeDriver driver, int i, String mark) {
        Set<String> out = new TreeSet<>();
        for (WebElement row : driver.findElements(By.cssSelector("#episodes section.panel:nth-of-type(" + (i + 1) + ") tbody tr"))) {
            List<String> c = row.findElements(By.tagName("td")).stream().map(WebElement::getText).toList();
            if (c.get(4).equals(mark)) {
                out.add(String.join(" ", c.subList(0, 4)));
            }
        }
        return out;
    }

    private static Set<String> raised(List<JsonNode> alerts) {
        Set<String> out = new TreeSet<>();
        for (JsonNode a : alerts) {
            if ("raised".equals(a.get("state").asText())) {
                JsonNode s = a.get("subject");
                out.add(a.get("stream").asText() + " " + a.get("rule").asText() + " " + s.get("term").asText()
                        + (s.hasNonNull("level") ? "=" + s.get("level").asText() : "")
                        + (a.hasNonNull("measure") ? " (" + a.get("measure").asText() + ")" : "") + " " + a.get("windowEnd").asText());
            }
        }
        return out;
    }

    private static List<JsonNode> alerts(Path file) throws IOException {
        List<JsonNode> out = new ArrayList<>();
        for (String line : Files.readAllLines(file, StandardCharsets.UTF_8)) {
            out.add(Json.mapper().readTree(line));
        }
        return out;
    }

    /** {@code replay --for-tuning} of the respiratory scenario, then {@code tune} with three settings. */
    private Path tune() throws IOException {
        Path events = dir.resolve("events.jsonl");
        run("simulate", "--rate", "600", "--duration", "30w", "--out", events.toString());
        Path replay = dir.resolve("replay");
        run("replay", "--for-tuning", "--config", EXAMPLE.toString(), "--input", events.toString(), "--out", replay.toString());
        String example = Files.readString(EXAMPLE, StandardCharsets.UTF_8);
        Path lower = dir.resolve("lower-drift.yaml");
        Files.writeString(lower, example.replace("limit: 3.0 ", "limit: 2.2 "), StandardCharsets.UTF_8);
        Path higher = dir.resolve("higher-cusum.yaml");
        Files.writeString(higher, example.replace("limit: 8.0", "limit: 14.0"), StandardCharsets.UTF_8);
        Path out = dir.resolve("tuned");
        CommandLineTest.Result r = run("tune", "--replay", replay.toString(), "--rules-from", EXAMPLE.toString(),
                "--rules-from", lower.toString(), "--rules-from", higher.toString(), "--out", out.toString());
        assertTrue(r.out().contains("comparison page: " + out.resolve(ComparisonReport.FILE)), r.out());
        return out;
    }

    private static CommandLineTest.Result run(String... args) {
        CommandLineTest.Result r = CommandLineTest.run(args);
        assertEquals(0, r.status(), String.join(" ", args) + ": " + r.err());
        return r;
    }
}
