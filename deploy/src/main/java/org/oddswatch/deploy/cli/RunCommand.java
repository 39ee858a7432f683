package org.oddswatch.deploy.cli;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.PrintWriter;
import java.net.BindException;
import java.net.InetSocketAddress;
import java.nio.file.Path;
import java.time.Duration;
import java.util.concurrent.Callable;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.ServiceSettings;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.service.MonitorService;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code oddswatch run}: the monitor service against a Kafka cluster. */
@Command(name = "run", mixinStandardHelpOptions = true,
        description = {
            "Run the monitor service against a Kafka cluster until SIGTERM or Ctrl-C (then exit 0).",
            "Consumes the definition's input topics in its consumer group, rebuilds window state from the topics, "
            + "publishes estimates, rejects and alerts, and serves /metrics, /health (ready after the rebuild) and "
            + "/status. Kafka settings come from the definition's kafka section and ODDSWATCH_KAFKA_<KEY> "
            + "environment variables (security.protocol, sasl.*, ssl.* pass through unchanged)."})
final class RunCommand implements Callable<Integer> {

    @Mixin
    DefinitionFile config;

    @Option(names = "--http", paramLabel = "HOST:PORT", description = "Address of the live page /, its API /api/, /metrics, /health and /status (overrides service.http; default 127.0.0.1:8470, loopback only).")
    String http;

    @Option(names = "--instance", paramLabel = "NAME", description = "Name of this instance in client ids and in the service_instance tag of meters (default: the host name).")
    String instance;

    @Spec
    CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        MonitorConfig loaded = config.load(spec.commandLine().getErr());
        MonitorConfig definition = http == null ? loaded : withHttp(loaded, http);
        InetSocketAddress address;
        try {
            address = HttpEndpoints.parseAddress(definition.service().http());
        } catch (IllegalArgumentException e) {
            throw UserError.config("--http: " + e.getMessage(), e);
        }
        String name = instance != null ? instance : hostName();
        PrintWriter out = spec.commandLine().getOut();
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        StopSignals signals = StopSignals.install();
        try (MonitorService service = new MonitorService(definition, registry, name)) {
            HttpEndpoints endpoints;
            try {
                endpoints = HttpEndpoints.start(address, registry, service::ready, service::status, service.site());
            } catch (BindException e) {
                throw UserError.config("cannot listen on " + definition.service().http() + " (" + e.getMessage() + ")", e);
            }
            try (endpoints) {
                service.start();
                out.println("oddswatch run: " + definition.monitors().size() + " monitor(s) on "
                        + String.join(", ", definition.topics()) + " via " + definition.kafka().getOrDefault(
                                "bootstrap.servers", "(no bootstrap.servers)") + ", group "
                        + definition.service().groupId() + "; http://" + endpoints.address().getHostString() + ":"
                        + endpoints.port() + "/status; live page http://" + endpoints.address().getHostString() + ":"
                        + endpoints.port() + "/");
                out.flush();
                while (!signals.stopRequested()) {
                    if (service.awaitStopped(Duration.ofMillis(200))) {
                        Throwable failure = service.failure();
                        throw UserError.runtime("the monitor service stopped: "
                                + (failure == null ? "unknown reason" : failure.getMessage()), failure);
                    }
                }
                out.println("stopping: committing offsets and leaving the group ...");
                out.flush();
            }
        } finally {
            signals.finished();
        }
        out.println("stopped");
        out.flush();
        return 0;
    }

    private static MonitorConfig withHttp(MonitorConfig c, String http) {
        ServiceSettings s = c.service();
        return new MonitorConfig(c.file(), c.kafka(), new ServiceSettings(http, s.groupId(), s.refresh(),
                s.idleTimeout(), s.rebuildMargin()), c.limits(), c.monitors());
    }

    private static String hostName() {
        String env = System.getenv("HOSTNAME");
        if (env != null && !env.isBlank()) {
            return env;
        }
        try {
            return java.net.InetAddress.getLocalHost().getHostName();
        } catch (java.io.IOException e) {
            return "oddswatch";
        }
    }
}
