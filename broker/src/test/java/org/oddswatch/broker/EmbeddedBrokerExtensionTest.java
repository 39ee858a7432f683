package org.oddswatch.broker;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;

/** The test extension itself: a record produced to the embedded node comes back unchanged, in order. */
class EmbeddedBrokerExtensionTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    @Test
    void producedRecordsAreReadBackInOrder() throws Exception {
        KAFKA.createTopic("fixture-check", 1);
        List<byte[]> values = new ArrayList<>();
        List<String> keys = new ArrayList<>();
        for (int i = 0; i < 50; i++) {
            keys.add("k" + i);
            values.add(("{\"n\":" + i + "}").getBytes(StandardCharsets.UTF_8));
        }
        KAFKA.produce("fixture-check", keys, values);

        List<ConsumerRecord<String, byte[]>> read = KAFKA.readAll("fixture-check", Duration.ofSeconds(30));

        assertEquals(50, read.size());
        for (int i = 0; i < 50; i++) {
            assertEquals("k" + i, read.get(i).key());
            assertEquals("{\"n\":" + i + "}", new String(read.get(i).value(), StandardCharsets.UTF_8));
            assertEquals(i, read.get(i).offset());
        }
        assertTrue(KAFKA.bootstrapServers().startsWith("127.0.0.1:"), KAFKA.bootstrapServers());
        try (var admin = KAFKA.admin()) {
            var nodes = admin.describeCluster().nodes().get();
            assertEquals(1, nodes.size());
            assertEquals("127.0.0.1", nodes.iterator().next().host(), "advertised host");
        }
    }
}
