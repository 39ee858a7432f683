package org.oddswatch.deploy.cli;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.OutputStreamWriter;
import java.io.PrintWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.Iterator;
import java.util.Properties;
import java.util.Set;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.TimeoutException;
import org.apache.kafka.clients.admin.Admin;
import org.oddswatch.deploy.feed.SimulatedClock;
import org.oddswatch.deploy.feed.TopicPublisher;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch simulate}: scenario records to a JSON Lines file or a Kafka topic. */
@Command(name = "simulate", mixinStandardHelpOptions = true,
        description = {
            "Write simulated scenario records to a JSON Lines file or a Kafka topic.",
            "The scenarios and their true parameters are described in deploy/SCENARIOS.md. Records sent to a topic "
            + "are keyed by region and carry their event time as the record timestamp; give such a topic "
            + "unlimited time retention (retention.ms=-1) when the simulated dates lie in the past."})
final class SimulateCommand implements Callable<Integer> {

    @Mixin
    ScenarioArgs scenario = new ScenarioArgs();

    @Option(names = "--start", paramLabel = "TIME", defaultValue = "2026-01-05T00:00:00Z",
            description = "Simulated start (RFC 3339 or a date). Default: ${DEFAULT-VALUE}.")
    Instant start;

    @Option(names = "--defects", paramLabel = "SHARE", defaultValue = "0",
            description = "Share of extra malformed, late and duplicate records (0 to 1). Default: ${DEFAULT-VALUE}.")
    double defects;

    @Option(names = {"--duration", "--span"}, paramLabel = "DURATION", defaultValue = "P280D",
            description = "Simulated span (ISO-8601 or 40w, 90d, ...). Default: ${DEFAULT-VALUE} (40 weeks).")
    Duration span;

    @ArgGroup(exclusive = true, multiplicity = "1")
    Target target;

    static final class Target {
        @Option(names = "--out", paramLabel = "FILE", description = "JSON Lines file to write ('-' for standard output).")
        String out;

        @Option(names = "--topic", paramLabel = "TOPIC", description = "Kafka topic to send to.")
        String topic;

        @Option(names = "--describe", description = "Only print the scenario, its true parameters' script and expected prevalence.")
        boolean describe;
    }

    @Mixin
    KafkaOptions kafka = new KafkaOptions();

    @Option(names = "--speed", paramLabel = "FACTOR", defaultValue = "0",
            description = "With --topic: simulated time runs this many times faster than real time (0 = as fast as possible). Default: ${DEFAULT-VALUE}.")
    double speed;

    @Mixin
    ProgressOption progress;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        Scenario s = scenario.build(start, span, defects);
        PrintWriter out = spec.commandLine().getOut();
        if (target.describe) {
            out.print(s.describe());
            out.flush();
            return 0;
        }
        if (target.topic != null) {
            return toTopic(s, out);
        }
        long n = toFile(s, target.out);
        if (!"-".equals(target.out)) {
            out.println("wrote " + n + " records of scenario " + s.name() + " to " + target.out);
        }
        return 0;
    }

    private long toFile(Scenario s, String file) throws IOException {
        if ("-".equals(file)) {
            Writer w = new BufferedWriter(new OutputStreamWriter(System.out, StandardCharsets.UTF_8));
            long n = write(s.iterator(), w);
            w.flush();
            return n;
        }
        Path path = Path.of(file);
        Path parent = path.toAbsolutePath().getParent();
        if (parent != null && !Files.isDirectory(parent)) {
            throw UserError.config("cannot write " + file + ": directory " + parent + " does not exist");
        }
        try (Writer w = Files.newBufferedWriter(path, StandardCharsets.UTF_8);
             ProgressMeter meter = progress.start(ProgressMeter.records("simulate", expectedRecords(s)))) {
            long n = write(meter.counting(s.iterator()), w);
            meter.done();
            return n;
        }
    }

    /**
     * The mean number of records: clean events arrive as a Poisson process of {@code eventsPerWeek},
     * and each is followed by a defective record with probability {@code defectShare}.
     */
    static long expectedRecords(Scenario s) {
        double weeks = s.options().duration().toMillis() / (double) Duration.ofDays(7).toMillis();
        return Math.max(1, Math.round(s.options().eventsPerWeek() * weeks * (1 + s.options().defectShare())));
    }

    private static long write(Iterator<ScenarioEvent> events, Writer w) throws IOException {
        long n = 0;
        while (events.hasNext()) {
            w.write(events.next().toJson());
            w.write('\n');
            n++;
        }
        return n;
    }

    /** Fails with one clear line when the broker cannot be reached or the topic does not exist. */
    private static void requireTopic(Properties props, String topic) throws InterruptedException {
        Properties adminProps = new Properties();
        adminProps.putAll(props);
        adminProps.putIfAbsent("default.api.timeout.ms", "15000");
        adminProps.putIfAbsent("request.timeout.ms", "10000");
        Admin admin = Admin.create(adminProps);
        try {
            Set<String> names = admin.listTopics().names().get(20, TimeUnit.SECONDS);
            if (!names.contains(topic)) {
                throw UserError.config("topic '" + topic + "' does not exist at " + props.get("bootstrap.servers")
                        + "; create it first (see deploy/OPERATIONS.md, section 1)");
            }
        } catch (ExecutionException e) {
            throw UserError.runtime("cannot reach Kafka at " + props.get("bootstrap.servers") + " ("
                    + e.getCause().getMessage() + ")", e);
        } catch (TimeoutException e) {
            throw UserError.runtime("cannot reach Kafka at " + props.get("bootstrap.servers")
                    + " (no answer within 20 s)", e);
        } finally {
            admin.close(Duration.ZERO);
        }
    }

    private int toTopic(Scenario s, PrintWriter out) throws InterruptedException {
        if (speed < 0) {
            throw UserError.config("--speed must be 0 or positive, got " + speed);
        }
        Properties props = kafka.clientProps(System.getenv());
        requireTopic(props, target.topic);
        SimulatedClock clock = new SimulatedClock(s.options().start(), speed);
        StopSignals signals = StopSignals.install();
        try (TopicPublisher publisher = new TopicPublisher(props, target.topic);
             ProgressMeter meter = progress.start(ProgressMeter.records("simulate " + target.topic,
                     expectedRecords(s)))) {
            if (clock.paced()) {
                out.println("sending scenario " + s.name() + " to " + target.topic + " at " + speed
                        + "x real time (the span takes about " + clock.realTimeOf(span).toSeconds() + " s)");
                out.flush();
            }
            long n = publisher.publish(meter.counting(s.iterator()), clock, signals::stopRequested);
            if (!signals.stopRequested()) {
                meter.done();
            }
            out.println("sent " + n + " records of scenario " + s.name() + " to " + target.topic
                    + (signals.stopRequested() ? " (stopped early)" : ""));
        } finally {
            signals.finished();
        }
        return 0;
    }
}
