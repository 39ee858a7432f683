package org.oddswatch.deploy;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
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
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.function.Predicate;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Assumptions;

/**
 * The packaged jar ({@code target/oddswatch.jar}) running one command as a separate process, with
 * its output lines collected for the test. Only for the integration tests (failsafe, after package).
 */
public final class JarProcess implements AutoCloseable {

    private static final Pattern BOOTSTRAP = Pattern.compile("Kafka bootstrap: (\\S+)");
    /** The first address printed: the sandbox's page ({@code http://host:port/}) or run's {@code /status}. */
    private static final Pattern HTTP = Pattern.compile("http://([^/\\s]+)/");

    private final Process process;
    private final List<String> lines = new ArrayList<>();
    private final Thread reader;
    private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();

    private JarProcess(Process process) {
        this.process = process;
        this.reader = new Thread(this::read, "sandbox-output");
        reader.setDaemon(true);
        reader.start();
    }

    /** Starts {@code java -jar oddswatch.jar ARGS} with its standard error merged into its output. */
    public static JarProcess start(String... args) throws IOException {
        return start(Map.of(), args);
    }

    /** The same, with extra environment variables. */
    public static JarProcess start(Map<String, String> environment, String... args) throws IOException {
        Path jar = Path.of(System.getProperty("oddswatch.jar", "target/oddswatch.jar"));
        Assumptions.assumeTrue(Files.isRegularFile(jar), "the packaged jar is missing: run mvn verify");
        List<String> command = new ArrayList<>(List.of(
                Path.of(System.getProperty("java.home"), "bin", "java").toString(), "-Xmx768m", "-jar",
                jar.toString()));
        command.addAll(List.of(args));
        ProcessBuilder builder = new ProcessBuilder(command).redirectErrorStream(true);
        builder.environment().putAll(environment);
        return new JarProcess(builder.start());
    }

    /** Waits for the process to end by itself and returns its exit status. */
    public int awaitExit(Duration timeout) throws InterruptedException {
        if (!process.waitFor(timeout.toMillis(), TimeUnit.MILLISECONDS)) {
            process.destroyForcibly();
            throw new AssertionError("not finished within " + timeout + "; output:\n" + output());
        }
        reader.join(5000);
        return process.exitValue();
    }

    private void read() {
        try (BufferedReader in = new BufferedReader(new InputStreamReader(process.getInputStream(), StandardCharsets.UTF_8))) {
            String line;
            while ((line = in.readLine()) != null) {
                synchronized (lines) {
                    lines.add(line);
                    lines.notifyAll();
                }
            }
        } catch (IOException ignored) {
            // the process ended
        }
    }

    /** Waits for the first output line matching {@code which}; fails with the output so far after the timeout. */
    public String awaitLine(Predicate<String> which, Duration timeout, String what) throws InterruptedException {
        long deadline = System.nanoTime() + timeout.toNanos();
        int seen = 0;
        synchronized (lines) {
            while (true) {
                for (; seen < lines.size(); seen++) {
                    if (which.test(lines.get(seen))) {
                        return lines.get(seen);
                    }
                }
                long left = deadline - System.nanoTime();
                if (left <= 0 || (!process.isAlive() && seen == lines.size())) {
                    throw new AssertionError("no " + what + " within " + timeout + "; output:\n" + output());
                }
                lines.wait(Math.max(1, Math.min(TimeUnit.NANOSECONDS.toMillis(left), 200)));
            }
        }
    }

    public String bootstrap() throws InterruptedException {
        return group(BOOTSTRAP, awaitLine(l -> BOOTSTRAP.matcher(l).find(), Duration.ofSeconds(60), "bootstrap line"));
    }

    public String httpAddress() throws InterruptedException {
        return group(HTTP, awaitLine(l -> HTTP.matcher(l).find(), Duration.ofSeconds(60), "HTTP line"));
    }

    private static String group(Pattern p, String line) {
        Matcher m = p.matcher(line);
        assertTrue(m.find());
        return m.group(1);
    }

    public HttpResponse<String> get(String path) throws IOException, InterruptedException {
        HttpRequest request = HttpRequest.newBuilder(URI.create("http://" + httpAddress() + path))
                .timeout(Duration.ofSeconds(10)).GET().build();
        return http.send(request, HttpResponse.BodyHandlers.ofString());
    }

    /**
     * Sends SIGTERM and waits for the exit status. Through the process handle, because
     * {@link Process#destroy()} also closes our ends of the pipes and the last lines would be lost.
     */
    public int terminate(Duration timeout) throws InterruptedException {
        process.toHandle().destroy();
        if (!process.waitFor(timeout.toMillis(), TimeUnit.MILLISECONDS)) {
            process.destroyForcibly();
            throw new AssertionError("the sandbox did not stop within " + timeout + " of SIGTERM; output:\n" + output());
        }
        reader.join(5000);
        return process.exitValue();
    }

    /** Kills the process with SIGKILL (no shutdown hook runs, nothing is flushed or committed) and waits for it. */
    public void kill() throws InterruptedException {
        process.toHandle().destroyForcibly();
        process.waitFor(30, TimeUnit.SECONDS);
        reader.join(5000);
    }

    public String output() {
        synchronized (lines) {
            return String.join("\n", lines);
        }
    }

    @Override
    public void close() {
        if (process.isAlive()) {
            process.destroyForcibly();
        }
    }
}
