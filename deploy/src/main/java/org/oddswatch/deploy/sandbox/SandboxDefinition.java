package org.oddswatch.deploy.sandbox;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.LinkedHashSet;
import java.util.Map;
import java.util.Set;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.ServiceSettings;

/**
 * The monitor definition the sandbox runs: the packaged {@code examples/respiratory.yaml} unless the
 * user gives another file, pointed at the embedded broker, with the sandbox's HTTP address, its own
 * consumer group and a short refresh so open windows show interim estimates while time races on.
 */
public final class SandboxDefinition {

    /** Classpath location of the packaged example definitions (deploy/examples). */
    public static final String EXAMPLES = "org/oddswatch/deploy/examples/";
    public static final String BUILT_IN = "respiratory.yaml";

    private SandboxDefinition() {
    }

    /** The text of a packaged example definition. */
    public static String example(String name) throws IOException {
        try (InputStream in = SandboxDefinition.class.getClassLoader().getResourceAsStream(EXAMPLES + name)) {
            if (in == null) {
                throw new IOException("the packaged example " + name + " is missing from the jar");
            }
            return new String(in.readAllBytes(), StandardCharsets.UTF_8);
        }
    }

    /**
     * Loads the definition and rewrites its connection and service settings for the sandbox.
     *
     * @param file the user's definition, or null for the packaged respiratory example
     * @param bootstrap the embedded broker's address
     * @param http the HTTP address of the endpoints
     * @param refresh interval of interim estimates (real time)
     */
    public static MonitorConfig load(Path file, String bootstrap, String http, Duration refresh)
            throws DefinitionException, IOException {
        Map<String, String> env = Map.of(DefinitionLoader.KAFKA_ENV_PREFIX + "BOOTSTRAP_SERVERS", bootstrap);
        MonitorConfig loaded = file == null
                // named as from the repository root, so the replay command in alert messages works there
                ? DefinitionLoader.parse("deploy/examples/" + BUILT_IN, example(BUILT_IN), env, null)
                : DefinitionLoader.parse(file.toString(), Files.readString(file, StandardCharsets.UTF_8), env,
                        file.toAbsolutePath().getParent());
        ServiceSettings s = loaded.service();
        ServiceSettings sandbox = new ServiceSettings(http, "oddswatch-sandbox", refresh, s.idleTimeout(),
                s.rebuildMargin());
        return new MonitorConfig(loaded.file(), loaded.kafka(), sandbox, loaded.limits(), loaded.monitors());
    }

    /** Every topic the definition reads or writes, inputs first. */
    public static Set<String> topics(MonitorConfig config) {
        Set<String> topics = new LinkedHashSet<>(config.topics());
        for (MonitorDefinition m : config.monitors()) {
            topics.add(m.outputs().estimatesTopic());
            topics.add(m.outputs().alertsTopic());
            topics.add(m.outputs().rejectsTopic());
        }
        return topics;
    }
}
