package org.oddswatch.deploy.sandbox;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.OutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The sandbox's log file. While it is open, the process's standard error, where the slf4j-simple
 * backend writes every logger (the service's, the Kafka clients' and the embedded broker's, and the
 * alert messages as JSON of the service's log output), goes into {@code file} instead of between the
 * summary's redraws; with {@code echo} it goes to both. So does {@link System#out}, where Kafka's
 * test kit prints its storage formatting: the summary keeps the terminal through a writer made on
 * the original stream before the log is opened.
 *
 * <p>It also notes the warnings that matter for monitoring, so the summary can point at them: every
 * {@code WARN} or {@code ERROR} line of an {@code org.oddswatch} logger, except the alert messages
 * themselves (logger {@code org.oddswatch.alerts}, shown as alerts already), and every {@code ERROR}
 * line of any other logger. Lines are recognised by the backend's layout with the full logger name:
 * {@code <time> <LEVEL> <logger> - <message>}.
 */
public final class SandboxLog implements AutoCloseable {

    /** The logger of the alert log output, whose warnings are alert messages, not problems. */
    static final String ALERT_LOGGER = "org.oddswatch.alerts";

    private static final Pattern LINE = Pattern.compile("^\\S+ (WARN|ERROR) (\\S+) - (.*)$");

    private final Path file;
    private final PrintStream previousErr;
    private final PrintStream previousOut;
    private final PrintStream replacement;
    private long warnings;
    private String newest;

    private SandboxLog(Path file, OutputStream out, PrintStream echo) {
        this.file = file;
        this.previousErr = System.err;
        this.previousOut = System.out;
        this.replacement = new PrintStream(new NotingStream(out, echo), true, StandardCharsets.UTF_8);
    }

    /**
     * Starts a new log file (an existing one is replaced) and sends {@link System#err} and
     * {@link System#out} to it.
     *
     * @param file the log file
     * @param echo where log lines are shown as well (the terminal's standard error), or null for the file only
     */
    public static SandboxLog open(Path file, PrintStream echo) throws IOException {
        Path absolute = file.toAbsolutePath();
        if (absolute.getParent() != null) {
            Files.createDirectories(absolute.getParent());
        }
        OutputStream out = Files.newOutputStream(absolute);
        SandboxLog log = new SandboxLog(absolute, out, echo);
        System.setErr(log.replacement);
        System.setOut(log.replacement);
        return log;
    }

    /** The log file (absolute). */
    public Path file() {
        return file;
    }

    /** What the summary shows about the log: warnings noted so far and the newest one. */
    public record Notes(long warnings, String newest) {
        /** No warning. */
        public static final Notes NONE = new Notes(0, null);
    }

    public synchronized Notes notes() {
        return new Notes(warnings, newest);
    }

    private synchronized void line(String text) {
        Matcher m = LINE.matcher(text);
        if (!m.matches()) {
            return;
        }
        String logger = m.group(2);
        boolean ours = logger.startsWith("org.oddswatch.") || logger.equals("org.oddswatch");
        boolean alertMessage = logger.equals(ALERT_LOGGER) || logger.equals("alerts");   // full or short name
        if (alertMessage || (!ours && !m.group(1).equals("ERROR"))) {
            return;
        }
        warnings++;
        int dot = logger.lastIndexOf('.');
        newest = m.group(1) + " " + logger.substring(dot + 1) + ": " + m.group(3);
    }

    /** Gives standard error and output back and closes the file. */
    @Override
    public void close() throws IOException {
        if (System.err == replacement) {
            System.setErr(previousErr);
        }
        if (System.out == replacement) {
            System.setOut(previousOut);
        }
        replacement.close();
    }

    /** Bytes to the file (and the echo), split into lines to note the warnings. */
    private final class NotingStream extends OutputStream {
        private final OutputStream out;
        private final PrintStream echo;
        private final ByteArrayOutputStream current = new ByteArrayOutputStream();

        NotingStream(OutputStream out, PrintStream echo) {
            this.out = out;
            this.echo = echo;
        }

        @Override
        public synchronized void write(int b) throws IOException {
            write(new byte[] {(byte) b}, 0, 1);
        }

        @Override
        public synchronized void write(byte[] b, int off, int len) throws IOException {
            out.write(b, off, len);
            if (echo != null) {
                echo.write(b, off, len);
            }
            int start = off;
            for (int i = off; i < off + len; i++) {
                if (b[i] == '\n') {
                    current.write(b, start, i - start);
                    line(current.toString(StandardCharsets.UTF_8).stripTrailing());
                    current.reset();
                    start = i + 1;
                }
            }
            current.write(b, start, off + len - start);
        }

        @Override
        public synchronized void flush() throws IOException {
            out.flush();
            if (echo != null) {
                echo.flush();
            }
        }

        @Override
        public synchronized void close() throws IOException {
            out.close();
        }
    }
}
