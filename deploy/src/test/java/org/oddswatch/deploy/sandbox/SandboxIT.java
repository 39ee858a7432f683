package org.oddswatch.deploy.sandbox;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.LocalDate;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.oddswatch.deploy.JarProcess;
import org.oddswatch.alerts.json.Json;

/**
 * The packaged jar in sandbox mode, as a separate process: the scripted doubling of the
 * household-contact odds ratio (week 16, 2026-04-27) raises the odds-ratio drift alert within the
 * time budget, {@code /metrics} and {@code /status} are served, and SIGTERM stops it with exit 0. The
 * first line is the live page's address; log lines and the alert JSON go to the log file, not to the
 * terminal.
 */
class SandboxIT {

    /** Simulated weeks per real second: 450000 / 604800 = 0.74; week 16 after about 22 s. */
    private static final String SPEED = "450000";
    private static final Duration ALERT_BUDGET = Duration.ofSeconds(100);
    private static final Pattern PAGE = Pattern.compile("^page {5}http://127\\.0\\.0\\.1:\\d+/ ");
    private static final Pattern LOG_LINE =
            Pattern.compile("\\d{4}-\\d{2}-\\d{2}T\\d{2}:\\d{2}:\\d{2}\\.\\d{3}\\S* (TRACE|DEBUG|INFO|WARN|ERROR) ");
    private static final Pattern WINDOW_END = Pattern.compile("window ending (\\d{4}-\\d{2}-\\d{2})");

    @Test
    void reachesTheScriptedDriftAlertServesMetricsAndStopsCleanly() throws Exception {
        Path logFile = Path.of("target", "sandbox-it.log");
        try (JarProcess sandbox = JarProcess.start("sandbox", "--plain", "--http", "127.0.0.1:0", "--speed", SPEED,
                "--log", logFile.toString())) {
            String first = sandbox.awaitLine(l -> true, Duration.ofSeconds(60), "first line");
            assertTrue(PAGE.matcher(first).find(), "the page's address first: " + first);
            String alert = sandbox.awaitLine(l -> l.startsWith("alert") && l.contains("RAISED")
                            && l.contains("odds-ratio-drift household_contact=yes"), ALERT_BUDGET,
                    "raised odds-ratio drift alert on household contact");

            // the alert belongs to a window ending after the scripted change, not before it
            Matcher m = WINDOW_END.matcher(alert);
            assertTrue(m.find(), alert);
            LocalDate end = LocalDate.parse(m.group(1));
            assertFalse(end.isBefore(LocalDate.parse("2026-04-28")), "window ending " + end + " precedes the change");
            assertFalse(end.isAfter(LocalDate.parse("2026-05-25")), "detected late: window ending " + end);

            HttpResponse<String> metrics = sandbox.get("/metrics");
            assertEquals(200, metrics.statusCode());
            assertTrue(metrics.headers().firstValue("Content-Type").orElse("").startsWith("text/plain"));
            assertTrue(metrics.body().lines().anyMatch(l -> l.startsWith("oddswatch_")), "oddswatch meters exposed");

            HttpResponse<String> health = sandbox.get("/health");
            assertEquals(200, health.statusCode(), health.body());

            JsonNode status = Json.mapper().readTree(sandbox.get("/status").body());
            JsonNode counts = status.path("counts");
            long consumed = counts.path("consumed").asLong();
            assertTrue(consumed > 10_000, "consumed " + consumed);
            long sum = 0;
            for (JsonNode n : counts.path("outcomes")) {
                sum += n.asLong();
            }
            assertEquals(consumed, sum, "consumed = accepted + rejected + late + duplicate");
            assertTrue(counts.path("outcomes").path("rejected").asLong() > 0, "the default feed injects defects");

            assertEquals(0, sandbox.terminate(Duration.ofSeconds(40)), sandbox.output());
            assertTrue(sandbox.output().contains("stopped on request"), sandbox.output());

            // standard output and error together: no log line and no alert JSON; they are in the log file
            for (String line : sandbox.output().lines().toList()) {
                assertFalse(LOG_LINE.matcher(line).find(), "a log line on the terminal: " + line);
                assertFalse(line.contains("{\""), "JSON on the terminal: " + line);
            }
            String log = Files.readString(logFile, StandardCharsets.UTF_8);
            assertTrue(log.contains("\"rule\":\"odds-ratio-drift\""), "the alert JSON in " + logFile);
            // full logger names, the service's and the Kafka clients' or broker's
            assertTrue(Pattern.compile(" (INFO|WARN) org\\.oddswatch\\.\\S+ - ").matcher(log).find(), "service log lines");
        }
    }
}
