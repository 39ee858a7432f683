package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.deploy.JarProcess;

/** The topics of the packaged example definition on an embedded broker, fed by {@code simulate --topic}. */
final class ExampleTopics {

    static final String INPUT = "clinic-tests";
    static final Path EXAMPLE = Path.of("examples/respiratory.yaml").toAbsolutePath();

    private ExampleTopics() {
    }

    static void create(EmbeddedBrokerExtension kafka) {
        for (String topic : List.of(INPUT, "oddswatch-estimates", "oddswatch-alerts", "oddswatch-rejects")) {
            kafka.createTopic(topic, 1);
        }
    }

    /** Runs the packaged {@code simulate --topic} with the extra arguments; the number of records sent. */
    static long simulate(EmbeddedBrokerExtension kafka, String... more) throws Exception {
        List<String> args = new java.util.ArrayList<>(List.of("simulate", "--topic", INPUT, "--bootstrap",
                kafka.bootstrapServers()));
        args.addAll(List.of(more));
        JarProcess simulate = JarProcess.start(args.toArray(String[]::new));
        assertEquals(0, simulate.awaitExit(Duration.ofSeconds(90)), simulate.output());
        Matcher sent = Pattern.compile("sent (\\d+) records").matcher(simulate.output());
        assertTrue(sent.find(), simulate.output());
        return Long.parseLong(sent.group(1));
    }
}
