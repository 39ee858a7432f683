package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.net.BindException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.concurrent.Callable;
import org.oddswatch.deploy.sandbox.Sandbox;
import org.oddswatch.deploy.sandbox.SandboxLog;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.ParentCommand;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch sandbox}: embedded broker, simulated feed, live monitor, summary. */
@Command(name = "sandbox", mixinStandardHelpOptions = true,
        description = {
            "Run everything locally: an embedded Kafka broker, a simulated feed, the monitor service and a live summary.",
            "Starts a single-node KRaft broker on 127.0.0.1, creates the topics, streams the scenario in simulated "
            + "time faster than real time, runs the monitor service on it (baseline fitted from the scenario's first "
            + "twelve weeks), serves the live page, /metrics, /health and /status, and prints the broker's bootstrap address so "
            + "that any Kafka client can produce to it. With the default settings the scripted odds-ratio doubling "
            + "raises an alert within about a minute. Ctrl-C stops everything (exit 0).",
            "The first line is the address of the live page. On a terminal the summary is one screen redrawn in "
            + "place (plain lines when the output is not a terminal, or with --plain). Log lines, of the service, "
            + "the Kafka clients and the embedded broker, and the alert messages as JSON go to the log file "
            + "(--log); with --verbose they are shown on standard error as well, at info level, and the summary "
            + "is printed as plain lines so that they do not erase each other.",
            "The data are simulated. A signal calls for investigation; it is not a diagnosis or proof of cause. "
            + "Local public-health rules, data-protection law and qualified epidemiologists decide what is done."})
final class SandboxCommand implements Callable<Integer> {

    @Option(names = "--config", paramLabel = "FILE",
            description = "Monitor definition to run (default: the packaged examples/respiratory.yaml). Its Kafka "
                    + "and service settings are replaced by the sandbox's.")
    Path config;

    @Mixin
    ScenarioArgs scenario = new ScenarioArgs();

    @Option(names = "--defects", paramLabel = "SHARE", defaultValue = "0.01",
            description = "Share of extra malformed, late and duplicate records in the feed. Default: ${DEFAULT-VALUE}.")
    double defects;

    @Option(names = "--span", paramLabel = "DURATION", defaultValue = "P280D",
            description = "Simulated span of the feed. Default: ${DEFAULT-VALUE} (40 weeks).")
    Duration span;

    @Option(names = "--speed", paramLabel = "FACTOR", defaultValue = "300000",
            description = "Simulated time runs this many times faster than real time (300000: a week in about "
                    + "2 s). Default: ${DEFAULT-VALUE}.")
    double speed;

    @Option(names = "--kafka-port", paramLabel = "PORT", defaultValue = "0",
            description = "Broker port on 127.0.0.1 (0: any free port). Default: ${DEFAULT-VALUE}.")
    int kafkaPort;

    @Option(names = "--http", paramLabel = "HOST:PORT", defaultValue = "127.0.0.1:8470",
            description = "Address of the live page (/) and of /metrics, /health and /status (port 0: any free port; "
                    + "loopback unless you choose otherwise). Default: ${DEFAULT-VALUE}.")
    String http;

    @Option(names = "--partitions", paramLabel = "N", defaultValue = "1",
            description = "Partitions of the input topic (monitors without a split need 1). Default: ${DEFAULT-VALUE}.")
    int partitions;

    @Option(names = "--refresh", paramLabel = "DURATION", defaultValue = "1s",
            description = "How often the summary is redrawn and interim estimates are made. Default: ${DEFAULT-VALUE}.")
    Duration refresh;

    @Option(names = "--plain", description = "Print plain lines instead of redrawing the screen (the default when "
            + "standard output is not a terminal).")
    boolean plain;

    @Option(names = "--log", paramLabel = "FILE", defaultValue = "oddswatch-sandbox.log",
            description = "Log file of the run, replaced at each start (relative to the working directory). "
                    + "Default: ${DEFAULT-VALUE}.")
    Path log;

    @Option(names = "--no-feed", description = "No simulated feed: wait for events produced by other clients.")
    boolean noFeed;

    @Option(names = "--duration", paramLabel = "DURATION",
            description = "Stop after this much real time (e.g. 90s).")
    Duration duration;

    @Option(names = "--until-alert", paramLabel = "RULE", arity = "0..1", fallbackValue = "any",
            description = "Stop after the first raised alert (of this rule, e.g. odds-ratio-drift, if given).")
    String untilAlert;

    @Spec
    CommandSpec spec;

    @ParentCommand
    OddswatchCommand top;

    @Override
    public Integer call() throws Exception {
        validate();
        Scenario s = scenario.build(ScenarioOptions.DEFAULT_START, span, defects);
        PrintWriter out = spec.commandLine().getOut();
        boolean verbose = top != null && top.verbose();
        // with --verbose, log lines share the terminal: a redraw would erase them
        boolean redraw = !plain && !verbose && System.console() != null;
        SandboxLog sandboxLog;
        try {
            sandboxLog = SandboxLog.open(log, verbose ? System.err : null);
        } catch (IOException e) {
            throw UserError.config("--log: cannot write " + log + " (" + e.getMessage() + ")", e);
        }
        try (sandboxLog) {
            return run(new Sandbox(new Sandbox.Settings(config, kafkaPort, http, s, speed, !noFeed, refresh, redraw,
                    partitions, verbose), out, sandboxLog), out);
        }
    }

    private int run(Sandbox sandbox, PrintWriter out) throws Exception {
        StopSignals signals = StopSignals.install();
        long deadline = duration == null ? Long.MAX_VALUE : System.nanoTime() + duration.toNanos();
        String rule = untilAlert;
        Sandbox.Stopper stopper = progress -> System.nanoTime() >= deadline
                || (rule != null && progress.raisedAlerts().stream()
                        .anyMatch(a -> rule.equals("any") || rule.equals(a.path("rule").asText())));
        try {
            long raised = sandbox.run(stopper, signals::stopRequested);
            out.println("stopped" + (signals.stopRequested() ? " on request" : "") + "; " + raised
                    + " alert(s) raised during the run");
            out.flush();
            return 0;
        } catch (BindException e) {
            throw UserError.config("cannot listen on " + http + " (" + e.getMessage()
                    + "); choose another address with --http, e.g. --http 127.0.0.1:0", e);
        } finally {
            signals.finished();
        }
    }

    private void validate() {
        if (config != null) {
            DefinitionFile.load(config);   // a bad file fails here with file:line: key: problem
        }
        if (!(speed >= 0)) {
            throw UserError.config("--speed must be 0 (unpaced) or positive, got " + speed);
        }
        if (partitions < 1) {
            throw UserError.config("--partitions must be at least 1, got " + partitions);
        }
        if (kafkaPort < 0 || kafkaPort > 65535) {
            throw UserError.config("--kafka-port must be a port number, got " + kafkaPort);
        }
        if (refresh.isNegative() || refresh.isZero()) {
            throw UserError.config("--refresh must be positive");
        }
        try {
            org.oddswatch.ingest.http.HttpEndpoints.parseAddress(http);
        } catch (IllegalArgumentException e) {
            throw UserError.config("--http: " + e.getMessage(), e);
        }
    }
}
