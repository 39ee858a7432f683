package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.logging.Level;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.report.html.HtmlReport;
import org.oddswatch.estimator.reference.ReferenceTools;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.openqa.selenium.By;
import org.openqa.selenium.JavascriptExecutor;
import org.openqa.selenium.OutputType;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.chrome.ChromeDriver;
import org.openqa.selenium.chrome.ChromeDriverService;
import org.openqa.selenium.chrome.ChromeOptions;
import org.openqa.selenium.chromium.ChromiumNetworkConditions;
import org.openqa.selenium.logging.LogEntry;
import org.openqa.selenium.logging.LogType;
import org.openqa.selenium.logging.LoggingPreferences;

/**
 * The README's worked example, ending as the README does by opening the report: simulates the house
 * scenario (seed 7, 30 weeks, 1 % defects), replays it with {@code examples/respiratory.yaml}, opens
 * {@code report.html} in headless Chromium with the network off and checks what a person would see:
 * every stream's charts drawn with one point per final window, one alert marker per alert message
 * (per chart and state), no script error or blocked request, no resource requested, and an
 * alerts-table row that leads to its chart. Saves {@code target/report-screenshot.png} (the README's
 * picture, {@code docs/images/report.png}); the replay folder stays in {@code target/worked-example}.
 *
 * <p>Needs Debian's {@code chromium} and {@code chromium-driver} (or {@code ODDSWATCH_CHROMIUM} and
 * {@code ODDSWATCH_CHROMEDRIVER}); skips where they are absent, unless
 * {@code ODDSWATCH_REQUIRE_REFERENCE_TOOLS=1} (CI), where their absence fails the test.
 */
class ReplayReportBrowserTest {

    /** The worked example's folder, relative like the README's commands (they appear in the alerts). */
    private static final Path EXAMPLE = Path.of("target", "worked-example");

    @TempDir
    Path dir;

    @Test
    void theReportDrawsEveryStreamsChartsOfflineAndLinksAlertsToThem() throws Exception {
        ChromeDriver driver = offlineChromium(dir);
        try {
            Path out = workedExample();
            Path page = out.resolve(HtmlReport.FILE);
            assertTrue(Files.isRegularFile(page));
            driver.get(page.toUri().toString());
            waitUntilReady(driver);
            JavascriptExecutor js = driver;

            assertEquals(List.of(), severe(driver), "script errors or blocked requests in the console");
            assertEquals(0L, js.executeScript("return performance.getEntriesByType('resource').length;"),
                    "the page requested nothing");

            Expected expected = expected(out);
            JsonNode charts = Json.mapper().readTree((String) js.executeScript(CHART_SUMMARY));
            assertEquals(expected.windows.keySet(), streamsDrawn(charts), "one section per stream");
            for (JsonNode chart : charts) {
                String stream = chart.get("streamName").asText();
                String key = chart.get("chart").asText();
                assertTrue(chart.get("width").asInt() > 200 && chart.get("height").asInt() > 100,
                        "canvas laid out: " + stream + " " + key);
                for (JsonNode ds : chart.get("datasets")) {
                    assertEquals(ds.get("points").asInt(), ds.get("drawn").asInt(),
                            "every point drawn: " + stream + " " + key + " " + ds.get("label").asText());
                    String role = ds.get("role").asText();
                    if (List.of("value", "band", "events", "positives").contains(role) && !key.startsWith("cusum:")) {
                        assertEquals(expected.windows.get(stream).intValue(), ds.get("points").asInt(),
                                "one point per final window: " + stream + " " + key + " " + role);
                    }
                }
            }
            for (String stream : expected.windows.keySet()) {
                List<String> keys = new ArrayList<>(List.of("prevalence", "strata", "oe", "slope", "volume"));
                keys.addAll(expected.watched.get(stream));
                for (String chart : keys) {
                    assertTrue(has(charts, stream, chart), stream + " has chart " + chart);
                }
            }
            assertEquals(expected.markers, markers(charts), "alert markers per stream, chart and state");
            assertTrue(expected.markers.keySet().stream().anyMatch(k -> k.contains("or:household_contact=yes")),
                    "the drift raises an odds-ratio alert: " + expected.markers);

            // Alerts table: one row per alert; a row leads to (and highlights) its chart.
            List<WebElement> rows = driver.findElements(By.cssSelector("#alert-table tbody tr"));
            assertEquals(expected.alerts, rows.size());
            WebElement last = rows.get(rows.size() - 1);
            String chartKey = (String) js.executeScript("return JSON.parse(document.getElementById("
                    + "'oddswatch-data').textContent).alerts[" + last.getAttribute("data-row") + "].chart;");
            last.click();
            Boolean flashed = (Boolean) js.executeScript("var f = document.querySelector('.chart.flash');"
                    + " return f !== null && f.getAttribute('data-chart') === arguments[0];", chartKey);
            assertTrue(flashed, "the row's chart is highlighted: " + chartKey);
            // The stream finder hides the other streams' sections and alert rows.
            WebElement filter = driver.findElement(By.id("filter"));
            filter.sendKeys("north");
            Object shown = js.executeScript("return Array.from(document.querySelectorAll('section.stream'))"
                    + ".filter(function (s) { return !s.classList.contains('hidden'); })"
                    + ".map(function (s) { return s.getAttribute('data-name'); });");
            assertEquals(expected.windows.keySet().stream().filter(n -> n.contains("north")).toList(), shown);
            filter.sendKeys(org.openqa.selenium.Keys.chord(org.openqa.selenium.Keys.CONTROL, "a"),
                    org.openqa.selenium.Keys.BACK_SPACE);
            assertEquals((long) expected.windows.size(), js.executeScript(
                    "return document.querySelectorAll('section.stream:not(.hidden)').length;"));
            assertTrue(driver.findElement(By.cssSelector(".caution")).getText()
                    .contains("not a diagnosis or proof of cause"));

            // The picture shows the page as it opens: top of the page, table scrolled to its first row.
            js.executeScript("document.activeElement.blur(); window.scrollTo(0, 0);"
                    + " document.querySelectorAll('.flash').forEach(function (e) { e.classList.remove('flash'); });"
                    + " var t = document.querySelector('.table-wrap'); t.scrollTop = 0; t.scrollLeft = 0;");
            new org.openqa.selenium.interactions.Actions(driver).moveToElement(driver.findElement(By.tagName("h1")))
                    .perform();
            screenshot(driver, "report-screenshot.png");
        } finally {
            driver.quit();
        }
    }

    /**
     * Headless Chromium with the network off (offline emulation on top of the page's own policy that
     * allows no request) and the browser console recorded; skips where Chromium is absent.
     */
    static ChromeDriver offlineChromium(Path dir) throws IOException {
        return chromium(dir, true);
    }

    /**
     * Headless Chromium with its console log kept; {@code offline}: the network emulated off (a page
     * from a file), else on (a page served on the loopback address).
     */
    static ChromeDriver chromium(Path dir, boolean offline) throws IOException {
        Path chromium = tool("ODDSWATCH_CHROMIUM", "/usr/bin/chromium");
        Path chromedriver = tool("ODDSWATCH_CHROMEDRIVER", "/usr/bin/chromedriver");
        ChromeDriverService service = new ChromeDriverService.Builder()
                .usingDriverExecutable(chromedriver.toFile()).usingAnyFreePort().build();
        ChromeOptions options = new ChromeOptions();
        options.setBinary(chromium.toFile());
        options.addArguments("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-dev-shm-usage",
                "--hide-scrollbars", "--force-device-scale-factor=1", "--window-size=1440,2000",
                "--user-data-dir=" + Files.createDirectories(dir.resolve("chromium-profile")));
        LoggingPreferences logs = new LoggingPreferences();
        logs.enable(LogType.BROWSER, Level.ALL);
        options.setCapability("goog:loggingPrefs", logs);
        ChromeDriver driver = new ChromeDriver(service, options);
        if (offline) {
            ChromiumNetworkConditions off = new ChromiumNetworkConditions();
            off.setOffline(true);
            driver.setNetworkConditions(off);
        }
        return driver;
    }

    /** Saves the visible page as {@code target/NAME}. */
    static void screenshot(ChromeDriver driver, String name) throws IOException {
        Path shot = Path.of("target", name);
        Files.createDirectories(shot.getParent());
        Files.copy(driver.getScreenshotAs(OutputType.FILE).toPath(), shot, StandardCopyOption.REPLACE_EXISTING);
        assertTrue(Files.size(shot) > 10_000, "screenshot written");
    }

    /** The console's severe entries: script errors and blocked requests. */
    static List<String> severe(ChromeDriver driver) {
        List<String> severe = new ArrayList<>();
        for (LogEntry entry : driver.manage().logs().get(LogType.BROWSER)) {
            if (entry.getLevel().intValue() >= Level.SEVERE.intValue()) {
                severe.add(entry.getMessage());
            }
        }
        return severe;
    }

    /** Per chart: stream, key, canvas size and per dataset its role, label, points and drawn elements. */
    private static final String CHART_SUMMARY = """
            return JSON.stringify(Array.from(document.querySelectorAll('figure.chart')).map(function (f) {
              var c = Chart.getChart(f.querySelector('canvas'));
              var s = document.getElementById('stream-' + f.getAttribute('data-stream'));
              return { streamName: s.getAttribute('data-name'), chart: f.getAttribute('data-chart'),
                width: c.width, height: c.height,
                datasets: c.data.datasets.map(function (d, i) {
                  return { role: d.role, label: d.label, points: d.data.length,
                           drawn: c.getDatasetMeta(i).data.length,
                           nonNull: d.data.filter(function (p) { return p.y !== null; }).length };
                }) };
            }));""";

    private static java.util.Set<String> streamsDrawn(JsonNode charts) {
        java.util.Set<String> names = new java.util.TreeSet<>();
        charts.forEach(c -> names.add(c.get("streamName").asText()));
        return names;
    }

    private static boolean has(JsonNode charts, String stream, String key) {
        for (JsonNode c : charts) {
            if (c.get("streamName").asText().equals(stream) && c.get("chart").asText().equals(key)) {
                return true;
            }
        }
        return false;
    }

    /** Drawn markers: "stream chart state" to count. */
    private static Map<String, Integer> markers(JsonNode charts) {
        Map<String, Integer> counts = new TreeMap<>();
        for (JsonNode c : charts) {
            for (JsonNode ds : c.get("datasets")) {
                String role = ds.get("role").asText();
                if (role.startsWith("marker-") && ds.get("points").asInt() > 0) {
                    counts.merge(c.get("streamName").asText() + " " + c.get("chart").asText() + " "
                            + role.substring("marker-".length()), ds.get("points").asInt(), Integer::sum);
                }
            }
        }
        return counts;
    }

    /** What the files of the replay say the page must show. */
    private record Expected(Map<String, Integer> windows, Map<String, java.util.Set<String>> watched,
                            Map<String, Integer> markers, int alerts) {
    }

    private static Expected expected(Path out) throws IOException {
        Map<String, Integer> windows = new TreeMap<>();
        Map<String, java.util.Set<String>> watched = new TreeMap<>();
        for (String line : Files.readAllLines(out.resolve(ReplayRunner.ESTIMATES), StandardCharsets.UTF_8)) {
            JsonNode e = Json.mapper().readTree(line);
            if ("final".equals(e.get("status").asText())) {
                windows.merge(e.get("stream").asText(), 1, Integer::sum);
                for (JsonNode c : e.get("coefficients")) {
                    if (c.has("lrP") || c.has("profileLower")) {
                        watched.computeIfAbsent(e.get("stream").asText(), k -> new java.util.TreeSet<>())
                                .add("or:" + c.get("term").asText() + "=" + c.get("level").asText());
                    }
                }
            }
        }
        Map<String, Integer> markers = new TreeMap<>();
        List<String> alerts = Files.readAllLines(out.resolve(ReplayRunner.ALERTS), StandardCharsets.UTF_8);
        for (String line : alerts) {
            JsonNode a = Json.mapper().readTree(line);
            String rule = a.get("rule").asText();
            JsonNode subject = a.get("subject");
            String label = subject.get("term").asText() + (subject.hasNonNull("level") ? "=" + subject.get("level").asText() : "");
            String chart = rule.contains("cusum") ? "cusum:" + rule + "|" + label
                    : label.equals("calibration") ? calibrationChart(a) : "or:" + label;
            markers.merge(a.get("stream").asText() + " " + chart + " " + a.get("state").asText(), 1, Integer::sum);
        }
        return new Expected(windows, watched, markers, alerts.size());
    }

    /** A calibration alert's chart: the slope's for a slope measure, else observed/expected's. */
    private static String calibrationChart(JsonNode alert) {
        return alert.path("measure").asText("").contains("slope") ? "slope" : "oe";
    }

    /** The README's worked example: {@code simulate} then {@code replay}, as the README writes them. */
    private static Path workedExample() throws IOException {
        Files.createDirectories(EXAMPLE);
        Path events = EXAMPLE.resolve("tests.jsonl");
        Path out = EXAMPLE.resolve("replay");
        run("simulate", "--scenario", "respiratory", "--seed", "7", "--span", "30w", "--defects", "0.01",
                "--out", events.toString());
        run("replay", "--config", "examples/respiratory.yaml", "--input", events.toString(), "--out", out.toString());
        return out;
    }

    private static void run(String... args) {
        java.io.StringWriter err = new java.io.StringWriter();
        int status = OddswatchCommand.execute(args, new java.io.PrintWriter(new java.io.StringWriter(), true),
                new java.io.PrintWriter(err, true));
        assertEquals(0, status, String.join(" ", args) + ": " + err);
    }

    static void waitUntilReady(ChromeDriver driver) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofSeconds(30).toNanos();
        while (System.nanoTime() < deadline) {
            Object ready = driver.executeScript("return document.body && document.body.getAttribute('data-ready');");
            if ("true".equals(ready)) {
                return;
            }
            Thread.sleep(100);
        }
        fail("the report did not finish drawing within 30 s");
    }

    /** The tool's path; a skip where it is missing, a failure instead under ODDSWATCH_REQUIRE_REFERENCE_TOOLS=1. */
    private static Path tool(String variable, String fallback) {
        String configured = System.getenv(variable);
        Path path = Path.of(configured == null || configured.isBlank() ? fallback : configured);
        ReferenceTools.require(Files.isExecutable(path) && !Files.isDirectory(path),
                path + " (Debian: apt-get install chromium chromium-driver)");
        return path;
    }
}
