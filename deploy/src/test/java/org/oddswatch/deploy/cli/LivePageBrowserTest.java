package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.function.Predicate;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.broker.EmbeddedBroker;
import org.oddswatch.deploy.feed.SimulatedClock;
import org.oddswatch.deploy.feed.TopicPublisher;
import org.oddswatch.deploy.sandbox.SandboxDefinition;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.service.MonitorService;
import org.openqa.selenium.By;
import org.openqa.selenium.chrome.ChromeDriver;

/**
 * The live page in headless Chromium, served by a service on the embedded broker with the packaged
 * respiratory definition, fed by the house scenario with its scripted doubling of the
 * household-contact odds ratio. The scenario is sent in two parts: up to the change, then the rest
 * while the page is open. Checks that the page lists every stream of the API and draws its charts;
 * that after the change an odds-ratio drift alert on household contact appears on the page without
 * a reload (a mark set in the page survives, and the page refreshed itself in between), and so does an
 * open incident with that episode among its evidence, whose button narrows the open alerts to its
 * episodes and back; that no
 * script error or policy violation is logged; that every request the page made went to the service's
 * own origin; saves {@code target/live-page-screenshot.png} (the README's picture,
 * {@code docs/images/live-page.png}) and {@code target/live-page-incident-episodes.png} (the alerts
 * narrowed to the incident's episodes); then that the filter narrows the list and the charts to the
 * matching stream (and {@code target/live-page-records.png} shows the records and partitions). Skips
 * without Chromium as {@link ReplayReportBrowserTest} does.
 */
class LivePageBrowserTest {

    private static final Duration WAIT = Duration.ofSeconds(120);
    /** Weeks simulated: the change comes in week 16, the drift alert within a few weeks of it. */
    private static final int WEEKS = 24;

    @TempDir
    Path dir;

    @Test
    void thePageShowsStreamsChartsTheDriftAlertAndItsIncidentWithoutReload() throws Exception {
        ChromeDriver driver = ReplayReportBrowserTest.chromium(dir, false);
        Scenario scenario = Scenario.respiratory(ScenarioOptions.defaults().withDuration(Duration.ofDays(7L * WEEKS)));
        Instant change = scenario.changeTime(scenario.changes().get(0));
        try (EmbeddedBroker broker = EmbeddedBroker.start(0)) {
            MonitorConfig config = SandboxDefinition.load(null, broker.bootstrapServers(), "127.0.0.1:0",
                    Duration.ofSeconds(1));
            String input = config.topics().iterator().next();
            Set<String> outputs = new LinkedHashSet<>(SandboxDefinition.topics(config));
            outputs.removeAll(config.topics());
            broker.createTopics(List.of(input), 1, Map.of("retention.ms", "-1"));
            broker.createTopics(List.copyOf(outputs), 1, Map.of("retention.ms", "-1"));
            PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
            Iterator<ScenarioEvent> events = scenario.iterator();
            try (MonitorService service = new MonitorService(config, registry, "browser").start();
                 HttpEndpoints http = HttpEndpoints.start(HttpEndpoints.parseAddress("127.0.0.1:0"), registry,
                         service::ready, service::status, service.site());
                 TopicPublisher feed = new TopicPublisher(broker.clientProps(), input)) {
                String origin = "http://127.0.0.1:" + http.port();
                List<ScenarioEvent> after = new ArrayList<>();
                feed.publish(until(events, e -> e.emittedAt().isBefore(change), after), unpaced(scenario), () -> false);
                awaitApi(origin, "streams with a final window", body -> countFinals(body) >= 3 && countFinals(body) == body.get("streams").size());

                driver.get(origin + "/?every=1");
                ReplayReportBrowserTest.waitUntilReady(driver);
                JsonNode streams = get(origin, "/api/streams").get("streams");
                assertEquals(streams.size(), driver.findElements(By.cssSelector("#stream-table tbody tr")).size(),
                        "one row per stream of /api/streams");
                assertTrue(streams.size() >= 3, "the overall stream and the regions: " + streams.size());
                awaitPage(driver, "charts drawn", "return document.querySelectorAll('#charts figure.chart canvas').length;",
                        n -> ((Number) n).intValue() >= 3 * 3);
                assertDrawnCharts(driver);
                Set<String> before = raisedOddsRatioRows(driver);
                Set<String> incidentsBefore = oddsRatioIncidentRows(driver);
                driver.executeScript("window.oddswatchMark = 'not reloaded';");
                long refreshesBefore = ((Number) driver.executeScript(
                        "return Number(document.body.getAttribute('data-refreshes'));")).longValue();

                // The rest of the scenario, with the change, while the page is open.
                feed.publish(concat(after, events), unpaced(scenario), () -> false);
                awaitPage(driver, "a raised odds-ratio drift alert on household contact on the page", null, x -> {
                    Set<String> now = raisedOddsRatioRows(driver);
                    now.removeAll(before);
                    return !now.isEmpty();
                });
                awaitPage(driver, "an open incident with the household-contact drift episode as evidence", null, x -> {
                    Set<String> now = oddsRatioIncidentRows(driver);
                    now.removeAll(incidentsBefore);
                    return !now.isEmpty();
                });
                assertEquals("not reloaded", driver.executeScript("return window.oddswatchMark;"), "no reload");
                assertIncidentListsItsEpisodes(driver);
                driver.executeScript("document.querySelector('#open-incidents tbody tr button.show').click(); window.scrollTo(0, 0);");
                ReplayReportBrowserTest.screenshot(driver, "live-page-incident-episodes.png");
                driver.executeScript("document.querySelector('#focus button.show').click();");
                long refreshesAfter = ((Number) driver.executeScript(
                        "return Number(document.body.getAttribute('data-refreshes'));")).longValue();
                assertTrue(refreshesAfter > refreshesBefore, "the page refreshed itself");
                assertNull(service.failure());

                assertEquals(List.of(), ReplayReportBrowserTest.severe(driver), "script errors or policy violations");
                List<?> requested = (List<?>) driver.executeScript("return performance.getEntriesByType('resource')"
                        + ".map(function (e) { return e.name; }).concat([location.href]);");
                assertTrue(requested.size() > 3, "the page fetched the API: " + requested);
                for (Object url : requested) {
                    assertTrue(String.valueOf(url).startsWith(origin + "/"), "a request off the service's origin: " + url);
                }
                assertTrue(driver.findElement(By.cssSelector(".caution")).getText().contains("not a diagnosis or proof of cause"));

                assertTrue(String.valueOf(driver.executeScript("return document.querySelector('#open-alerts tbody tr')"
                        + ".textContent;")).contains("oddswatch replay"), "the replay command is shown");
                driver.executeScript("window.scrollTo(0, 0);");
                ReplayReportBrowserTest.screenshot(driver, "live-page-screenshot.png");

                // The filter narrows the list (and the charts) to the matching streams.
                driver.findElement(By.id("filter")).sendKeys("south");
                assertEquals(1L, driver.executeScript("return document.querySelectorAll('#stream-table tbody tr').length;"));
                awaitPage(driver, "charts of the matching stream only", "return Array.from(document.querySelectorAll("
                        + "'#charts section.stream')).map(function (s) { return s.getAttribute('data-name'); }).join(',');",
                        names -> "respiratory-by-region/south".equals(names));
                driver.executeScript("document.getElementById('records').scrollIntoView();");
                ReplayReportBrowserTest.screenshot(driver, "live-page-records.png");
                assertEquals(List.of(), ReplayReportBrowserTest.severe(driver), "script errors after filtering");
            }
        } finally {
            driver.quit();
        }
    }

    /** Rows of the open-alerts table naming a raised or continuing odds-ratio drift on household contact. */
    private static Set<String> raisedOddsRatioRows(ChromeDriver driver) {
        // One script call: the table is redrawn on each refresh, so elements found earlier may be gone.
        return strings(driver, "return Array.from(document.querySelectorAll('#open-alerts tbody tr'))"
                + ".filter(function (r) { return r.textContent.indexOf('odds-ratio-drift') >= 0"
                + " && r.textContent.indexOf('household_contact=yes') >= 0; })"
                + ".map(function (r) { return r.getAttribute('data-alert'); });");
    }

    /**
     * Open-incident rows ({@code id|revision}) whose evidence lists an odds-ratio drift episode on
     * household contact.
     */
    private static Set<String> oddsRatioIncidentRows(ChromeDriver driver) {
        return strings(driver, "return Array.from(document.querySelectorAll('#open-incidents tbody tr'))"
                + ".filter(function (r) { return Array.from(r.querySelectorAll('.evidence li')).some(function (li) {"
                + " return li.textContent.indexOf('odds-ratio-drift') >= 0 && li.textContent.indexOf('household_contact=yes') >= 0; }); })"
                + ".map(function (r) { return r.getAttribute('data-incident') + '|' + r.querySelector('td').textContent; });");
    }

    /** The strings a script returns, in order, once each. */
    private static Set<String> strings(ChromeDriver driver, String script) {
        Set<String> out = new LinkedHashSet<>();
        ((List<?>) driver.executeScript(script)).forEach(r -> out.add(String.valueOf(r)));
        return out;
    }

    /**
     * Selecting an open incident's button lists only its episodes under the open alerts (at least one,
     * each named in its evidence) with a bar saying so; selecting again lists every open alert.
     */
    private static void assertIncidentListsItsEpisodes(ChromeDriver driver) throws Exception {
        JsonNode seen = Json.mapper().readTree((String) driver.executeScript("""
                var row = document.querySelector('#open-incidents tbody tr');
                var episodes = Array.from(row.querySelectorAll('.evidence li')).map(function (li) { return li.getAttribute('data-episode'); });
                var every = document.querySelectorAll('#open-alerts tbody tr').length;
                row.querySelector('button.show').click();
                var listed = Array.from(document.querySelectorAll('#open-alerts tbody tr')).map(function (r) { return r.getAttribute('data-alert'); });
                var bar = document.getElementById('focus');
                var focused = document.querySelector('#open-incidents tbody tr.focused button.show');
                var result = { episodes: episodes, every: every, listed: listed, bar: bar.textContent,
                  barShown: !bar.classList.contains('hidden'), pressed: focused.getAttribute('aria-pressed') };
                focused.click();
                result.after = document.querySelectorAll('#open-alerts tbody tr').length;
                result.barAfter = !bar.classList.contains('hidden');
                return JSON.stringify(result);"""));
        assertTrue(seen.get("listed").size() >= 1, "its open episodes are listed: " + seen);
        Set<String> episodes = new LinkedHashSet<>();
        seen.get("episodes").forEach(e -> episodes.add(e.asText()));
        seen.get("listed").forEach(a -> assertTrue(episodes.contains(a.asText()), "only its episodes: " + seen));
        assertTrue(seen.get("barShown").asBoolean() && seen.get("bar").asText().startsWith("Listing the "), seen.toString());
        assertEquals("true", seen.get("pressed").asText());
        assertEquals(seen.get("every").asInt(), seen.get("after").asInt(), "every open alert again: " + seen);
        assertFalse(seen.get("barAfter").asBoolean(), "the bar is gone: " + seen);
    }

    /** Every chart has a laid-out canvas, and every prevalence chart a drawn point per window. */
    private static void assertDrawnCharts(ChromeDriver driver) throws Exception {
        JsonNode charts = Json.mapper().readTree((String) driver.executeScript("""
                return JSON.stringify(Array.from(document.querySelectorAll('#charts figure.chart')).map(function (f) {
                  var c = Chart.getChart(f.querySelector('canvas'));
                  return { id: f.id, width: c.width, height: c.height, datasets: c.data.datasets.map(function (d, i) {
                    return { role: d.role, points: d.data.filter(function (p) { return p.y !== null; }).length,
                             drawn: c.getDatasetMeta(i).data.length }; }) };
                }));"""));
        int prevalence = 0;
        for (JsonNode chart : charts) {
            assertTrue(chart.get("width").asInt() > 200 && chart.get("height").asInt() > 100, chart.toString());
            for (JsonNode d : chart.get("datasets")) {
                if (d.get("role").asText().equals("prevalence")) {
                    prevalence++;
                    assertTrue(d.get("points").asInt() > 3, "prevalence points drawn: " + chart);
                    assertTrue(d.get("drawn").asInt() >= d.get("points").asInt(), chart.toString());
                }
            }
        }
        assertTrue(prevalence >= 1, "a prevalence chart: " + charts);
    }

    private static long countFinals(JsonNode body) {
        long n = 0;
        for (JsonNode s : body.get("streams")) {
            n += s.get("final").isNull() ? 0 : 1;
        }
        return n;
    }

    private static SimulatedClock unpaced(Scenario scenario) {
        return new SimulatedClock(scenario.options().start(), 0);
    }

    /** The events while {@code keep} holds; the first that does not goes to {@code rest}. */
    private static Iterator<ScenarioEvent> until(Iterator<ScenarioEvent> events, Predicate<ScenarioEvent> keep,
                                                 List<ScenarioEvent> rest) {
        return new Iterator<>() {
            private ScenarioEvent next = advance();

            private ScenarioEvent advance() {
                if (!events.hasNext()) {
                    return null;
                }
                ScenarioEvent e = events.next();
                if (keep.test(e)) {
                    return e;
                }
                rest.add(e);
                return null;
            }

            @Override
            public boolean hasNext() {
                return next != null;
            }

            @Override
            public ScenarioEvent next() {
                ScenarioEvent e = next;
                next = advance();
                return e;
            }
        };
    }

    private static Iterator<ScenarioEvent> concat(List<ScenarioEvent> first, Iterator<ScenarioEvent> then) {
        Iterator<ScenarioEvent> head = first.iterator();
        return new Iterator<>() {
            @Override
            public boolean hasNext() {
                return head.hasNext() || then.hasNext();
            }

            @Override
            public ScenarioEvent next() {
                return head.hasNext() ? head.next() : then.next();
            }
        };
    }

    private static JsonNode get(String origin, String path) throws Exception {
        HttpResponse<String> r = HttpClient.newHttpClient().send(HttpRequest.newBuilder(URI.create(origin + path)).build(),
                HttpResponse.BodyHandlers.ofString());
        assertEquals(200, r.statusCode(), r.body());
        return Json.mapper().readTree(r.body());
    }

    private static void awaitApi(String origin, String what, Predicate<JsonNode> done) throws Exception {
        long deadline = System.nanoTime() + WAIT.toNanos();
        JsonNode last = null;
        while (System.nanoTime() < deadline) {
            last = get(origin, "/api/streams");
            if (done.test(last)) {
                return;
            }
            Thread.sleep(250);
        }
        List<String> seen = new ArrayList<>();
        if (last != null) {
            last.get("streams").forEach(s -> seen.add(s.get("stream").asText() + (s.get("final").isNull() ? " (no final)" : "")));
        }
        fail("waited " + WAIT.toSeconds() + " s for " + what + "; streams: " + seen);
    }

    private static void awaitPage(ChromeDriver driver, String what, String script, Predicate<Object> done)
            throws InterruptedException {
        long deadline = System.nanoTime() + WAIT.toNanos();
        while (System.nanoTime() < deadline) {
            if (done.test(script == null ? null : driver.executeScript(script))) {
                return;
            }
            Thread.sleep(250);
        }
        fail("waited " + WAIT.toSeconds() + " s for " + what);
    }
}
