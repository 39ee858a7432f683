package org.oddswatch.deploy.cli;

import java.util.LinkedHashMap;
import java.util.Locale;
import java.util.Map;
import java.util.Properties;
import java.util.TreeMap;
import picocli.CommandLine.Option;

/**
 * Kafka connection options shared by commands that talk to a broker without a definition file:
 * {@code --bootstrap}, repeated {@code --kafka key=value} (security protocol, SASL and TLS keys pass
 * through unchanged), and the environment variables {@code ODDSWATCH_KAFKA_<KEY>} ({@code .} written
 * as {@code _}), which the command-line values override.
 */
final class KafkaOptions {

    static final String ENV_PREFIX = "ODDSWATCH_KAFKA_";

    @Option(names = "--bootstrap", paramLabel = "HOST:PORT", description = "Kafka bootstrap servers (default: localhost:9092 or ODDSWATCH_KAFKA_BOOTSTRAP_SERVERS).")
    String bootstrap;

    @Option(names = "--kafka", paramLabel = "KEY=VALUE", description = "A Kafka client property, passed unchanged (repeatable), e.g. security.protocol=SASL_SSL.")
    Map<String, String> properties = new LinkedHashMap<>();

    /** Environment first, then {@code --kafka}, then {@code --bootstrap}; localhost:9092 if nothing sets it. */
    Properties clientProps(Map<String, String> environment) {
        Properties props = new Properties();
        for (Map.Entry<String, String> e : new TreeMap<>(environment).entrySet()) {
            if (e.getKey().startsWith(ENV_PREFIX) && e.getKey().length() > ENV_PREFIX.length()) {
                props.put(e.getKey().substring(ENV_PREFIX.length()).toLowerCase(Locale.ROOT).replace('_', '.'), e.getValue());
            }
        }
        props.putAll(properties);
        if (bootstrap != null) {
            props.put("bootstrap.servers", bootstrap);
        }
        props.putIfAbsent("bootstrap.servers", "localhost:9092");
        return props;
    }
}
