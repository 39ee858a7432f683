package org.oddswatch.broker;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.admin.Admin;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;

/** What fault tests rely on: a stopped broker refuses clients, and comes back on the same port with its data. */
class EmbeddedBrokerRestartTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    @Test
    void aRestartedBrokerKeepsItsPortAndItsRecords() throws Exception {
        KAFKA.createTopic("restart-check", 1);
        KAFKA.produce("restart-check", List.of("a"), List.of("{\"n\":1}".getBytes(StandardCharsets.UTF_8)));
        String before = KAFKA.bootstrapServers();

        KAFKA.stopBroker();
        Admin admin = KAFKA.admin();
        try {
            assertThrows(Exception.class, () -> admin.describeCluster().nodes().get(2, TimeUnit.SECONDS),
                    "no broker answers while stopped");
        } finally {
            admin.close(Duration.ZERO);
        }
        KAFKA.restartBroker();

        assertEquals(before, KAFKA.bootstrapServers());
        var read = KAFKA.readAll("restart-check", Duration.ofSeconds(30));
        assertEquals(1, read.size());
        assertEquals("{\"n\":1}", new String(read.get(0).value(), StandardCharsets.UTF_8));
    }
}
