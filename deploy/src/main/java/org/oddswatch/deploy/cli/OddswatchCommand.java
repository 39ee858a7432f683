package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.util.Arrays;
import java.util.List;
import java.util.Set;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.ScopeType;

/**
 * The {@code oddswatch} command line. Exit status: 0 success, 2 usage or configuration error,
 * 1 runtime failure; an error is one line on standard error ({@code --verbose} adds the stack trace).
 */
@Command(name = "oddswatch",
        mixinStandardHelpOptions = true,
        versionProvider = OddswatchCommand.Version.class,
        description = {
            "Streaming prevalence and odds-ratio monitor for public-health surveillance.",
            "A signal calls for investigation; it is not a diagnosis or proof of cause."},
        subcommands = {
            SandboxCommand.class, RunCommand.class, ReplayCommand.class, BaselineCommand.class,
            CheckCommand.class, SimulateCommand.class, AuditCommand.class, TuneCommand.class, CommandLine.HelpCommand.class},
        footer = {"", "Start with: oddswatch sandbox"})
public final class OddswatchCommand implements Runnable {

    @Option(names = "--verbose", scope = ScopeType.INHERIT, description = "Show stack traces and more log output.")
    private boolean verbose;

    @CommandLine.Spec
    private CommandLine.Model.CommandSpec spec;

    boolean verbose() {
        return verbose;
    }

    @Override
    public void run() {
        // no subcommand: show the overview
        spec.commandLine().usage(spec.commandLine().getOut());
    }

    public static void main(String[] args) {
        configureLogging(args);
        PrintWriter err = new PrintWriter(System.err, true);
        int status;
        try {
            status = execute(args, new PrintWriter(System.out, true), err);
        } catch (Throwable t) {
            // an Error (out of memory, a class missing from a broken build) that picocli does not handle
            err.println("oddswatch: " + t + (Arrays.asList(args).contains("--verbose") ? "" : " (--verbose shows details)"));
            if (Arrays.asList(args).contains("--verbose")) {
                t.printStackTrace(err);
            }
            status = UserError.RUNTIME;
        }
        System.exit(status);
    }

    /** Log levels before the first logger exists (system properties override simplelogger.properties). */
    private static void configureLogging(String[] args) {
        List<String> list = Arrays.asList(args);
        if (list.stream().filter(a -> !a.startsWith("-")).findFirst().filter("sandbox"::equals).isPresent()) {
            // the sandbox's log goes to its log file (SandboxLog): full logger names, so that the summary can
            // tell the service's warnings from the broker's, and the Kafka warnings kept there
            System.setProperty("org.slf4j.simpleLogger.showShortLogName", "false");
            System.setProperty("org.slf4j.simpleLogger.showLogName", "true");
            System.setProperty("org.slf4j.simpleLogger.log.org.apache.kafka", "warn");
            System.setProperty("org.slf4j.simpleLogger.log.kafka", "warn");
        }
        if (list.contains("--verbose")) {
            System.setProperty("org.slf4j.simpleLogger.defaultLogLevel", "info");
            System.setProperty("org.slf4j.simpleLogger.log.org.apache.kafka", "info");
            System.setProperty("org.slf4j.simpleLogger.log.kafka", "info");
        } else if (list.stream().filter(a -> !a.startsWith("-")).findFirst().filter(Set.of("run", "replay", "baseline")::contains)
                .isPresent()) {
            // a real cluster: connection problems of the Kafka clients matter
            System.setProperty("org.slf4j.simpleLogger.log.org.apache.kafka", "warn");
            // except the network client's warning per failed connection attempt (several a second
            // while a broker is away): the service says once that no broker answers, and /health
            // and /status show it until one does
            System.setProperty("org.slf4j.simpleLogger.log.org.apache.kafka.clients.NetworkClient", "error");
        }
    }

    /** Runs one command line with the given output streams and returns its exit status. */
    public static int execute(String[] args, PrintWriter out, PrintWriter err) {
        OddswatchCommand top = new OddswatchCommand();
        CommandLine cmd = new CommandLine(top);
        ErrorReporting errors = new ErrorReporting(top);
        cmd.setOut(out).setErr(err)
                .setExecutionExceptionHandler(errors)
                .setParameterExceptionHandler(errors)
                .setCaseInsensitiveEnumValuesAllowed(true)
                .registerConverter(java.time.Duration.class, new DurationConverter())
                .registerConverter(java.time.Instant.class, new InstantConverter());
        return cmd.execute(args);
    }

    /** Version from the jar manifest, when packaged. */
    static final class Version implements CommandLine.IVersionProvider {
        @Override
        public String[] getVersion() {
            String v = OddswatchCommand.class.getPackage().getImplementationVersion();
            return new String[] {"oddswatch " + (v == null ? "(development build)" : v)};
        }
    }
}
