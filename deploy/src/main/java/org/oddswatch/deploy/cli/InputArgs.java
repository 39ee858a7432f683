package org.oddswatch.deploy.cli;

import java.nio.file.Path;
import picocli.CommandLine.Option;

/** Where events come from: a file, or a topic named in the definition (read through its Kafka settings). */
final class InputArgs {

    @Option(names = "--input", paramLabel = "FILE", description = "Event file: JSON Lines, or CSV (by the .csv extension or --format).")
    Path file;

    @Option(names = "--topic", paramLabel = "TOPIC", description = "Read the events from this Kafka topic instead (the definition's kafka settings and ODDSWATCH_KAFKA_* apply).")
    String topic;
}
