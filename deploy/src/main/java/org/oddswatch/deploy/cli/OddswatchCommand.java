package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
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
            CheckCommand.class, SimulateCommand.class, CommandLine.HelpCommand.class},
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
        if (java.util.Arrays.asList(args).contains("--verbose")) {
            // before the first logger exists; overrides simplelogger.properties
            System.setProperty("org.slf4j.simpleLogger.defaultLogLevel", "info");
        }
        System.exit(execute(args, new PrintWriter(System.out, true), new PrintWriter(System.err, true)));
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
