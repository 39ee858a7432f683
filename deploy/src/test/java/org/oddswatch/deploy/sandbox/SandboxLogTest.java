package org.oddswatch.deploy.sandbox;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The log file takes standard error and output while it is open, echoes them only when asked, gives
 * both streams back on close, and notes the warnings that matter: the service's warnings and errors
 * and anyone's errors, not the alert messages and not the Kafka clients' or broker's warnings.
 */
class SandboxLogTest {

    private static final String SERVICE_WARNING =
            "2026-12-03T17:00:00.000Z WARN org.oddswatch.ingest.service.BrokerWatch - Kafka broker not available";
    private static final String ALERT = "2026-12-03T17:00:01.000Z WARN org.oddswatch.alerts - alert a1 RAISED: drift\n"
            + "{\"rule\":\"odds-ratio-drift\"}";
    private static final String KAFKA_WARNING =
            "2026-12-03T17:00:02.000Z WARN org.apache.kafka.clients.NetworkClient - connection refused";
    private static final String KAFKA_ERROR = "2026-12-03T17:00:03.000Z ERROR kafka.server.BrokerServer - disk full";

    @Test
    void takesStandardErrorAndOutputAndNotesWhatMatters(@TempDir Path dir) throws Exception {
        PrintStream err = System.err;
        PrintStream out = System.out;
        SandboxLog.Notes notes;
        try (SandboxLog log = SandboxLog.open(dir.resolve("a/sandbox.log"), null)) {
            System.err.println(SERVICE_WARNING);
            System.err.println(ALERT);
            System.err.println(KAFKA_WARNING);
            System.out.println("Formatting metadata directory");
            notes = log.notes();
            assertEquals(1, notes.warnings(), "the service's warning only");
            assertEquals("WARN BrokerWatch: Kafka broker not available", notes.newest());
            // written in two pieces, as a stream may be: noted once the line is complete
            System.err.print(KAFKA_ERROR.substring(0, 30));
            System.err.flush();
            assertEquals(1, log.notes().warnings());
            System.err.println(KAFKA_ERROR.substring(30));
            notes = log.notes();
        }
        assertSame(err, System.err, "standard error given back");
        assertSame(out, System.out, "standard output given back");
        assertEquals(2, notes.warnings(), "an error of any logger counts");
        assertEquals("ERROR BrokerServer: disk full", notes.newest());
        String file = Files.readString(dir.resolve("a/sandbox.log"), StandardCharsets.UTF_8);
        assertEquals(String.join("\n", SERVICE_WARNING, ALERT, KAFKA_WARNING, "Formatting metadata directory",
                KAFKA_ERROR) + "\n", file.replace(System.lineSeparator(), "\n"));
    }

    @Test
    void echoesToTheTerminalOnlyWhenAsked(@TempDir Path dir) throws Exception {
        ByteArrayOutputStream terminal = new ByteArrayOutputStream();
        try (SandboxLog log = SandboxLog.open(dir.resolve("quiet.log"), null)) {
            System.err.println(SERVICE_WARNING);
        }
        try (SandboxLog log = SandboxLog.open(dir.resolve("verbose.log"),
                new PrintStream(terminal, true, StandardCharsets.UTF_8))) {
            System.err.println(ALERT);
        }
        String shown = terminal.toString(StandardCharsets.UTF_8);
        assertTrue(shown.contains(ALERT) && !shown.contains(SERVICE_WARNING), shown);
        assertTrue(Files.readString(dir.resolve("verbose.log")).contains(ALERT));
    }
}
