package org.oddswatch.deploy.sandbox;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioOptions;

/**
 * The sandbox in this process, on its real embedded broker, writing to a captured terminal until the
 * scripted drift raises its alert: the first line is the live page's address and that address answers
 * while the sandbox runs; every redrawn frame fits one screen; no log line and no alert JSON reach the
 * terminal, they are in the log file; with {@code verbose} they are shown on the terminal as well.
 */
class SandboxTerminalTest {

    /** slf4j-simple's layout: date-time, level, logger. */
    private static final Pattern LOG_LINE =
            Pattern.compile("\\d{4}-\\d{2}-\\d{2}T\\d{2}:\\d{2}:\\d{2}\\.\\d{3}\\S* (TRACE|DEBUG|INFO|WARN|ERROR) \\S+ - ");
    /** An alert message as published (the log output writes it after the message paragraph). */
    private static final String ALERT_JSON = "\"rule\":\"odds-ratio-drift\"";
    private static final Pattern PAGE = Pattern.compile("^page {5}(http://127\\.0\\.0\\.1:\\d+/) ");
    private static final String CLEAR = "\033[H\033[2J";
    private static final Duration ALERT_BUDGET = Duration.ofSeconds(180);

    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();

    /** What one run left behind. */
    private record Run(String terminal, String logFile, List<Integer> pageAnswers, long raised) {
    }

    @Test
    void onATerminalThePageComesFirstEachFrameFitsOneScreenAndTheLogGoesToItsFile(@TempDir Path dir) throws Exception {
        Run run = run(dir, true, null);
        List<String> lines = run.terminal().lines().toList();
        assertTrue(PAGE.matcher(lines.get(0)).find(), "first line: " + lines.get(0));
        assertEquals(List.of(200, 200), run.pageAnswers(), "/status, then /health once ready, at the printed address");
        assertTrue(lines.get(1).startsWith("log      "), lines.get(1));
        assertTrue(run.raised() > 0);

        String[] parts = run.terminal().split(Pattern.quote(CLEAR), -1);
        assertTrue(parts.length > 3, "frames redrawn: " + (parts.length - 1));
        boolean alertShown = false;
        for (int i = 1; i < parts.length; i++) {
            String frame = parts[i].endsWith("\n") ? parts[i].substring(0, parts[i].length() - 1) : parts[i];
            if (i == parts.length - 1) {
                // after the last frame: the lines of the stop
                frame = frame.substring(0, Math.max(0, frame.indexOf("\nstopping:")));
            }
            long height = frame.lines().count();
            assertTrue(height <= 20, "frame " + i + " has " + height + " lines:\n" + frame);
            alertShown |= frame.contains("odds-ratio-drift household_contact=yes");
        }
        assertTrue(alertShown, "the raised drift alert on the screen");
        System.out.println("the last frame:\n" + parts[parts.length - 1]);

        for (String line : lines) {
            assertFalse(LOG_LINE.matcher(line).find(), "a log line on the terminal: " + line);
            assertFalse(line.contains("{\""), "JSON on the terminal: " + line);
        }
        assertTrue(LOG_LINE.matcher(run.logFile()).find(), "log lines in the file");
        assertTrue(run.logFile().contains(ALERT_JSON), "the alert's JSON in the file");
    }

    @Test
    void verboseShowsTheLogLinesAndTheAlertJsonOnTheTerminalAsWellAsInTheFile(@TempDir Path dir) throws Exception {
        ByteArrayOutputStream terminalErr = new ByteArrayOutputStream();
        Run run = run(dir, false, new PrintStream(terminalErr, true, StandardCharsets.UTF_8));
        String shown = terminalErr.toString(StandardCharsets.UTF_8);
        assertTrue(LOG_LINE.matcher(shown).find(), "log lines on the terminal with --verbose:\n" + shown);
        assertTrue(shown.contains(ALERT_JSON), "the alert's JSON on the terminal with --verbose");
        assertTrue(LOG_LINE.matcher(run.logFile()).find(), "log lines in the file as well");
        assertTrue(run.logFile().contains(ALERT_JSON), "the alert's JSON in the file as well");
        // plain lines: no escape codes
        assertFalse(run.terminal().contains("\033"), run.terminal());
        // the incident the drift opened, as on-call receives it
        assertTrue(run.terminal().lines().anyMatch(l -> l.startsWith("incident OPENED")
                && l.contains("odds-ratio-drift household_contact=yes raised")), run.terminal());
        assertTrue(PAGE.matcher(run.terminal().lines().findFirst().orElse("")).find(), run.terminal());
    }

    /** Runs the sandbox until the drift alert is raised; checks the printed address while it runs. */
    private Run run(Path dir, boolean redraw, PrintStream echo) throws Exception {
        Scenario scenario = Scenario.respiratory(ScenarioOptions.defaults().withDuration(Duration.ofDays(280)));
        StringWriter terminal = new StringWriter();
        PrintWriter out = new PrintWriter(terminal, true);
        List<Integer> answers = new ArrayList<>();
        long deadline = System.nanoTime() + ALERT_BUDGET.toNanos();
        long raised;
        try (SandboxLog log = SandboxLog.open(dir.resolve("sandbox.log"), echo)) {
            Sandbox sandbox = new Sandbox(new Sandbox.Settings(null, 0, "127.0.0.1:0", scenario, 450000, true,
                    Duration.ofMillis(500), redraw, 1, echo != null), out, log);
            raised = sandbox.run(progress -> {
                String page = page(terminal.toString());
                if (answers.isEmpty()) {
                    answers.add(status(page + "status"));
                }
                if (answers.size() == 1 && progress.ready()) {
                    answers.add(status(page + "health"));
                }
                boolean drift = progress.raisedAlerts().stream()
                        .anyMatch(a -> a.path("rule").asText().equals("odds-ratio-drift"));
                if (!drift && System.nanoTime() > deadline) {
                    throw new AssertionError("no drift alert within " + ALERT_BUDGET + ":\n" + terminal);
                }
                return drift;
            }, () -> false);
        }
        return new Run(terminal.toString(), Files.readString(dir.resolve("sandbox.log"), StandardCharsets.UTF_8),
                answers, raised);
    }

    private static String page(String terminal) {
        Matcher m = PAGE.matcher(terminal.lines().findFirst().orElse(""));
        assertTrue(m.find(), "no page address first:\n" + terminal);
        return m.group(1);
    }

    private int status(String url) {
        try {
            HttpResponse<String> r = http.send(HttpRequest.newBuilder(URI.create(url)).timeout(Duration.ofSeconds(10))
                    .GET().build(), HttpResponse.BodyHandlers.ofString());
            assertNotNull(r.body());
            return r.statusCode();
        } catch (Exception e) {
            throw new AssertionError(url + " did not answer: " + e, e);
        }
    }
}
