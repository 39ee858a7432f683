package org.oddswatch.deploy.sandbox;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.PrintWriter;
import java.net.Inet6Address;
import java.net.InetAddress;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.HashSet;
import java.util.Iterator;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import java.util.function.BooleanSupplier;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.live.LiveSite;
import org.oddswatch.alerts.live.WebAnswer;
import org.oddswatch.broker.EmbeddedBroker;
import org.oddswatch.deploy.feed.SimulatedClock;
import org.oddswatch.deploy.feed.TopicPublisher;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.TermSpec;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.oddswatch.ingest.service.MonitorService;
import org.oddswatch.ingest.service.ServiceStatus;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Everything of {@code oddswatch sandbox} in one process: an embedded single-node KRaft broker on
 * 127.0.0.1, the definition's topics (with unlimited time retention, because simulated dates lie in
 * the past), the monitor service with {@code /metrics}, {@code /health} and {@code /status}, a
 * simulated feed paced faster than real time, and a live summary read from the output topics.
 *
 * <p>The terminal gets the live page's address first, then the summary: on a terminal one screen
 * ({@link SandboxView#MAX_LINES} lines at most) redrawn in place, otherwise plain lines without escape
 * codes. Log lines and the alert messages as JSON go to the {@link SandboxLog} file; what stops part
 * of a stream being monitored (from {@code /status}) and the warnings noted in the log are shown in the
 * summary, so nothing fails out of sight.
 *
 * <p>{@link #run} returns when {@code stop} says so (Ctrl-C, SIGTERM, the time limit or the first
 * matching alert), after closing the feed, the service, the endpoints and the broker in that order.
 */
public final class Sandbox {

    /**
     * @param definition the user's definition, or null for the packaged respiratory example
     * @param kafkaPort client port of the broker on 127.0.0.1 (0: any free port)
     * @param http HTTP address, {@code host:port} (port 0: any free port)
     * @param speed simulated seconds per real second (0: unpaced)
     * @param feed whether to run the simulated feed (false: wait for external producers)
     * @param refresh how often the summary is redrawn and interim estimates are made
     * @param redraw true to redraw a terminal screen, false for plain lines
     * @param partitions partitions of the input topics
     * @param verbose whether log lines are shown on the terminal as well as in the log file
     */
    public record Settings(Path definition, int kafkaPort, String http, Scenario scenario, double speed, boolean feed,
                           Duration refresh, boolean redraw, int partitions, boolean verbose) {
    }

    /** Progress the caller can watch (tests and the command). */
    public interface Stopper {
        /** Called about every refresh; return true to stop. */
        boolean shouldStop(Progress progress);
    }

    /** @param raisedAlerts alert messages with state {@code raised} so far */
    public record Progress(boolean ready, long sent, List<JsonNode> raisedAlerts) {
    }

    private static final Logger LOG = LoggerFactory.getLogger(Sandbox.class);

    private final Settings settings;
    private final PrintWriter out;
    private final SandboxLog log;

    /**
     * @param out the terminal: the page's address first, then the summary
     * @param log the log file standard error goes to, or null when it stays where it is
     */
    public Sandbox(Settings settings, PrintWriter out, SandboxLog log) {
        this.settings = settings;
        this.out = out;
        this.log = log;
    }

    /** Runs until the stopper says so; returns the number of raised alerts seen. */
    public long run(Stopper stopper, BooleanSupplier interrupted) throws Exception {
        LOG.info("starting the embedded Kafka broker (single node, KRaft)");
        try (EmbeddedBroker broker = EmbeddedBroker.start(settings.kafkaPort())) {
            MonitorConfig config = SandboxDefinition.load(settings.definition(), broker.bootstrapServers(),
                    settings.http(), settings.refresh());
            Set<String> inputs = config.topics();
            Set<String> outputs = new LinkedHashSet<>(SandboxDefinition.topics(config));
            outputs.removeAll(inputs);
            Map<String, String> keepForever = Map.of("retention.ms", "-1");
            broker.createTopics(List.copyOf(inputs), settings.partitions(), keepForever);
            broker.createTopics(List.copyOf(outputs), 1, keepForever);
            String inputTopic = inputs.iterator().next();
            return serve(broker, config, inputTopic, stopper, interrupted);
        }
    }

    private long serve(EmbeddedBroker broker, MonitorConfig config, String inputTopic, Stopper stopper,
                       BooleanSupplier interrupted) throws Exception {
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        SandboxView view = new SandboxView(settings.scenario(), settings.speed(), watchedTerms(config),
                settings.redraw() ? SandboxView.terminalWidth() : SandboxView.DEFAULT_WIDTH);
        List<JsonNode> raised = new ArrayList<>();
        Set<String> estimateTopics = new HashSet<>();
        Set<String> alertTopics = new HashSet<>();
        for (MonitorDefinition m : config.monitors()) {
            estimateTopics.add(m.outputs().estimatesTopic());
            alertTopics.add(m.outputs().alertsTopic());
        }
        boolean plain = !settings.redraw();
        try (MonitorService service = new MonitorService(config, registry, "sandbox").start();
             HttpEndpoints http = HttpEndpoints.start(HttpEndpoints.parseAddress(config.service().http()), registry,
                     service::ready, service::status, service.site());
             OutputWatcher watcher = new OutputWatcher(broker.clientProps(), estimateTopics, alertTopics,
                     e -> {
                         if (plain) {
                             println(view.finalLine(e));
                         }
                     },
                     a -> {
                         if ("raised".equals(a.path("state").asText())) {
                             synchronized (raised) {
                                 raised.add(a);
                             }
                         }
                         if (plain && !"continuing".equals(a.path("state").asText())) {
                             println("alert    " + view.alert(a));
                             if ("raised".equals(a.path("state").asText()) && a.hasNonNull("replayCommand")) {
                                 println("         reproduce: " + a.path("replayCommand").asText());
                             }
                         }
                     }).start()) {
            String page = pageAddress(http.address().getAddress(), http.port());
            String logFile = log == null ? "(standard error)" : shown(log.file());
            view.banner(page, logFile, broker.bootstrapServers(), settings.verbose()).forEach(this::println);
            println("script   " + view.script());
            println("  input topic:     " + inputTopic + "   definition: " + config.file());
            println("  replay it:       ODDSWATCH_KAFKA_BOOTSTRAP_SERVERS=" + broker.bootstrapServers()
                    + " deploy/oddswatch replay --config " + config.file() + " --topic " + inputTopic
                    + " --out sandbox-report");
            Feed feed = new Feed(broker, inputTopic);
            if (settings.feed()) {
                feed.start();
            } else {
                println("  no simulated feed (--no-feed): produce JSON events to " + inputTopic + " yourself");
            }
            long lastCounts = 0;
            Set<String> gapsShown = new HashSet<>();
            Set<String> incidentsShown = new HashSet<>();
            LiveSite site = service.site();
            while (true) {
                ServiceStatus status = service.status();
                List<JsonNode> raisedNow;
                synchronized (raised) {
                    raisedNow = List.copyOf(raised);
                }
                if (service.failure() != null) {
                    throw new IllegalStateException("the monitor service stopped: " + service.failure().getMessage()
                            + " (details in " + logFile + ")", service.failure());
                }
                if (feed.failure.get() != null) {
                    throw new IllegalStateException("the simulated feed stopped: " + feed.failure.get().getMessage()
                            + " (details in " + logFile + ")", feed.failure.get());
                }
                List<MonitoringGap> gaps = gaps(status);
                SandboxLog.Notes notes = log == null ? SandboxLog.Notes.NONE : log.notes();
                if (settings.redraw()) {
                    SandboxView.Frame frame = new SandboxView.Frame(page, logFile, broker.bootstrapServers(),
                            status.state(), feed.simulatedNow.get(), feed.sent.get(), feed.done.get(),
                            status.counts(), watcher.streams(), watcher.alerts(), openIncidents(site), gaps, notes);
                    redraw(view.screen(frame));
                } else {
                    for (MonitoringGap g : gaps) {
                        // each thing not monitored once, when it first appears (not again as its counts grow)
                        if (gapsShown.add(g.stream() + "|" + g.scope() + "|" + g.subject() + "|" + g.reason())) {
                            println("not monitored  " + g.describe());
                        }
                    }
                    printNewIncidentMessages(site, view, incidentsShown);
                    if (System.nanoTime() - lastCounts > 10_000_000_000L) {
                        lastCounts = System.nanoTime();
                        Instant now = feed.simulatedNow.get();
                        println("status   " + status.state() + ", simulated time " + (now == null ? "-" : now)
                                + ", sent " + feed.sent.get() + "; " + view.counts(status.counts()) + "; log: "
                                + (notes.warnings() == 0 ? "no warnings" : notes.warnings() + " warning(s), the newest: "
                                        + notes.newest()));
                    }
                }
                if (interrupted.getAsBoolean()
                        || stopper.shouldStop(new Progress(service.ready(), feed.sent.get(), raisedNow))) {
                    break;
                }
                sleepOrStop(interrupted);
            }
            println("stopping: feed, service, endpoints, broker ...");
            feed.stop();
            return raised.size();
        }
    }

    /**
     * The open incidents' newest messages as the service published them (its live API), oldest
     * first; none when the API does not answer.
     */
    static List<JsonNode> openIncidents(LiveSite site) {
        return incidents(site, "open", 0);
    }

    /** The last {@code recent} incident messages from the live API, newest first, or those still open. */
    private static List<JsonNode> incidents(LiveSite site, String which, int recent) {
        WebAnswer answer = site.answer("/api/alerts", "recent=" + recent);
        if (answer == null || answer.status() != 200) {
            return List.of();
        }
        try {
            List<JsonNode> found = new ArrayList<>();
            Json.mapper().readTree(answer.body()).path("incidents").path(which).forEach(found::add);
            return found;
        } catch (java.io.IOException e) {
            LOG.warn("the live API's incidents could not be read: {}", e.getMessage());
            return List.of();
        }
    }

    /**
     * Plain mode: one line per incident message not shown yet (opened, updated, resolved), oldest
     * first; {@code shown} holds the id and revision of each line already printed.
     */
    private void printNewIncidentMessages(LiveSite site, SandboxView view, Set<String> shown) {
        List<JsonNode> recent = new ArrayList<>(incidents(site, "recent", 50));
        Collections.reverse(recent);
        for (JsonNode i : recent) {
            if (shown.add(i.path("id").asText() + "#" + i.path("revision").asText())) {
                println("incident " + view.incident(i));
            }
        }
    }

    /** Everything {@code /status} says is not monitored, over all partitions. */
    private static List<MonitoringGap> gaps(ServiceStatus status) {
        List<MonitoringGap> gaps = new ArrayList<>();
        for (PipelineSnapshot input : status.inputs()) {
            for (StreamStatus s : input.streams()) {
                gaps.addAll(s.gaps());
            }
        }
        return gaps;
    }

    /**
     * The page's address for a browser: the bound address, or the loopback address when the
     * service listens on every interface (a browser cannot open {@code 0.0.0.0}).
     */
    static String pageAddress(InetAddress bound, int port) {
        InetAddress host = bound == null || bound.isAnyLocalAddress() ? InetAddress.getLoopbackAddress() : bound;
        String text = host.getHostAddress();
        return "http://" + (host instanceof Inet6Address ? "[" + text + "]" : text) + ":" + port + "/";
    }

    /** A path as the user would type it: relative when under the working directory. */
    private static String shown(Path file) {
        Path here = Path.of("").toAbsolutePath();
        return file.startsWith(here) ? here.relativize(file).toString() : file.toString();
    }

    private void sleepOrStop(BooleanSupplier interrupted) throws InterruptedException {
        long until = System.nanoTime() + settings.refresh().toNanos();
        while (System.nanoTime() < until && !interrupted.getAsBoolean()) {
            Thread.sleep(50);
        }
    }

    private void redraw(List<String> lines) {
        StringBuilder b = new StringBuilder("\033[H\033[2J");
        for (String line : lines) {
            b.append(line).append('\n');
        }
        out.print(b);
        out.flush();
    }

    private void println(String line) {
        synchronized (out) {
            out.println(line);
            out.flush();
        }
    }

    private static Map<String, Set<String>> watchedTerms(MonitorConfig config) {
        Map<String, Set<String>> watched = new HashMap<>();
        for (MonitorDefinition m : config.monitors()) {
            Set<String> names = new HashSet<>();
            for (TermSpec t : m.terms()) {
                if (t.term().watched()) {
                    names.add(t.name());
                }
            }
            watched.put(m.name(), names);
        }
        return watched;
    }

    /** The simulated feed on its own thread. */
    private final class Feed {
        private final EmbeddedBroker broker;
        private final String topic;
        private final AtomicBoolean stop = new AtomicBoolean();
        private final AtomicBoolean done = new AtomicBoolean();
        private final AtomicLong sent = new AtomicLong();
        private final AtomicReference<Instant> simulatedNow = new AtomicReference<>();
        private final AtomicReference<Throwable> failure = new AtomicReference<>();
        private Thread thread;

        Feed(EmbeddedBroker broker, String topic) {
            this.broker = broker;
            this.topic = topic;
        }

        void start() {
            thread = new Thread(this::run, "oddswatch-sandbox-feed");
            thread.setDaemon(true);
            thread.start();
        }

        private void run() {
            Scenario scenario = settings.scenario();
            SimulatedClock clock = new SimulatedClock(scenario.options().start(), settings.speed());
            Iterator<ScenarioEvent> events = scenario.iterator();
            Iterator<ScenarioEvent> counted = new Iterator<>() {
                @Override
                public boolean hasNext() {
                    return events.hasNext();
                }

                @Override
                public ScenarioEvent next() {
                    ScenarioEvent e = events.next();
                    sent.incrementAndGet();
                    simulatedNow.set(e.emittedAt());
                    return e;
                }
            };
            try (TopicPublisher publisher = new TopicPublisher(broker.clientProps(), topic)) {
                publisher.publish(counted, clock, stop::get);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            } catch (Throwable t) {
                if (!stop.get()) {
                    failure.set(t);
                }
            } finally {
                done.set(true);
            }
        }

        void stop() throws InterruptedException {
            stop.set(true);
            if (thread != null) {
                thread.join(15_000);
            }
        }
    }
}
