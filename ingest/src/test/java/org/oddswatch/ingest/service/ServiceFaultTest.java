package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.ByteArrayOutputStream;
import java.net.InetSocketAddress;
import java.net.ServerSocket;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Properties;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.concurrent.atomic.AtomicReference;
import org.apache.kafka.clients.admin.NewTopic;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.http.HttpEndpoints;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.oddswatch.ingest.pipeline.Outcome;

/**
 * Faults on a real broker: instances joining and leaving while a feed runs (both group protocols),
 * a broker outage longer than the client timeouts, an unreachable broker at the start, and hostile
 * records (over 1 MB, bad UTF-8). The service never stops; finals equal a replay of the same events.
 * Short client timeouts keep each test well under a minute.
 */
class ServiceFaultTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final String NEVER = "P3650D";
    private static final Duration WAIT = Duration.ofSeconds(90);
    /** Short client timeouts: the service's broker waits follow default.api.timeout.ms. */
    private static final String SHORT_TIMEOUTS = "  default.api.timeout.ms: 2000\n  request.timeout.ms: 2000\n"
            + "  reconnect.backoff.max.ms: 500\n";

    private static String[] regions(int n) {
        String[] out = new String[n];
        for (int i = 0; i < n; i++) {
            out[i] = "r" + (char) ('a' + i);
        }
        return out;
    }

    private static MonitorConfig config(String prefix, int maxStreams, String extraKafka) {
        return TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), prefix + "-tests", prefix,
                prefix + "-group", maxStreams, NEVER).replace("kafka:\n", "kafka:\n" + extraKafka));
    }

    private static void createTopics(String prefix, int partitions) {
        KAFKA.createTopic(prefix + "-tests", partitions);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
    }

    /** Every live final equals the replay's final of the same key; every stream has finals. */
    private static void assertFinalsEqualReplay(Map<String, String> replay, Map<String, String> live, int streams) {
        assertTrue(live.size() > streams, "finals: " + live.size());
        Set<String> seen = new TreeSet<>();
        for (Map.Entry<String, String> e : live.entrySet()) {
            assertEquals(replay.get(e.getKey()), e.getValue(), "final " + e.getKey() + " equals the replay's");
            seen.add(e.getKey().substring(0, e.getKey().indexOf('|')));
        }
        assertEquals(streams, seen.size(), "every stream has finals: " + seen);
    }

    // ---- joins and leaves -------------------------------------------------------------------

    @ParameterizedTest
    @ValueSource(strings = {"classic", "consumer"})
    void joinsAndLeavesWhileAFeedRunsGiveEveryFinalOnceAndEqualToReplay(String protocol) throws Exception {
        String prefix = "scale-" + protocol;
        String[] regions = regions(20);
        createTopics(prefix, 4);
        // About 200 events per stream and window: well-informed fits (see ingest/KAFKA.md, "State
        // rebuild", on the warm starts of separated windows after a hand-over).
        List<TestFeed.Event> events = TestFeed.events(41, 12000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(100), Duration.ofHours(6), regions);
        MonitorConfig config = config(prefix, 20, "  group.protocol: " + protocol + "\n");
        AtomicReference<Throwable> feedFailure = new AtomicReference<>();
        int chunks = 12;
        Thread feed = new Thread(() -> {
            try {
                for (int c = 0; c < chunks; c++) {
                    ServiceTestSupport.produce(KAFKA, prefix + "-tests",
                            events.subList(c * events.size() / chunks, (c + 1) * events.size() / chunks), true, true);
                    Thread.sleep(400);
                }
            } catch (Throwable t) {
                feedFailure.set(t);
            }
        }, "feed");
        List<MonitorService> all = new ArrayList<>();
        long joinNanos = 0;
        MonitorService a = new MonitorService(config, new SimpleMeterRegistry(), "a").start();
        all.add(a);
        try {
            feed.start();
            ServiceTestSupport.awaitTrue("a ready", WAIT, a::ready);
            MonitorService b = new MonitorService(config, new SimpleMeterRegistry(), "b").start(); // join
            all.add(b);
            long joined = System.nanoTime();
            ServiceTestSupport.awaitTrue("a and b share the partitions", WAIT, () -> a.ready() && b.ready()
                    && !a.status().partitions().isEmpty() && !b.status().partitions().isEmpty());
            joinNanos = System.nanoTime() - joined;
            b.close(); // leave
            ServiceTestSupport.awaitTrue("a owns all partitions", WAIT, () -> a.ready() && a.status().partitions().size() == 4);
            MonitorService c = new MonitorService(config, new SimpleMeterRegistry(), "c").start(); // join again
            all.add(c);
            ServiceTestSupport.awaitTrue("a and c share the partitions", WAIT, () -> a.ready() && c.ready()
                    && !c.status().partitions().isEmpty());
            a.close(); // the first instance leaves: a rolling restart's second half
            ServiceTestSupport.awaitTrue("c owns all partitions", WAIT, () -> c.ready() && c.status().partitions().size() == 4);
            feed.join();
            assertNull(feedFailure.get());
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
        } finally {
            all.forEach(MonitorService::close);
        }
        for (MonitorService s : all) {
            assertNull(s.failure(), "no instance stopped on an error: " + s.failure());
        }
        System.out.printf("fault figures: %s join, both instances ready after %d ms%n", protocol, joinNanos / 1_000_000);
        Map<String, String> replay = ServiceTestSupport.replayFinals(config, prefix + "-tests", events);
        // finals() fails on any final estimate published twice: each window exactly once.
        assertFinalsEqualReplay(replay, ServiceTestSupport.finals(KAFKA, prefix + "-estimates"), regions.length);
    }

    // ---- broker outage ------------------------------------------------------------------------

    @Test
    void aBrokerOutageLongerThanTheClientTimeoutsIsWaitedOutAndNothingIsLost() throws Exception {
        String prefix = "outage";
        String[] regions = regions(4);
        createTopics(prefix, 2);
        List<TestFeed.Event> events = TestFeed.events(43, 3000, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(120), Duration.ofHours(6), regions);
        MonitorConfig config = config(prefix, 8, SHORT_TIMEOUTS);
        int first = events.size() * 2 / 5;
        int half = events.size() * 7 / 10;
        ServiceTestSupport.produce(KAFKA, prefix + "-tests", events.subList(0, first), true, true);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        MonitorService service = new MonitorService(config, registry, "outage").start();
        try (service; HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry,
                service::ready, service::status)) {
            HttpClient client = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(2)).build();
            String health = "http://127.0.0.1:" + http.port() + "/health";
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            ServiceTestSupport.awaitTrue("ready", WAIT, service::ready);
            assertEquals(200, status(client, health));

            // More events, and the broker goes away at once: the service is in the middle of them
            // (outputs not yet stored, offsets not yet committed, or both).
            ServiceTestSupport.produce(KAFKA, prefix + "-tests", events.subList(first, half), true, true);
            long stopped = System.nanoTime();
            KAFKA.stopBroker();
            long brokerDown = System.nanoTime();
            ServiceTestSupport.awaitTrue("not ready while the broker is away", WAIT, () -> !service.ready());
            long noticed = System.nanoTime() - stopped;
            assertEquals(503, status(client, health));
            assertEquals("waiting-for-broker", service.status().state());
            assertNotNull(service.status().reason(), "/status names the reason");
            // Stay away longer than every client timeout (2 s) and the service's broker wait.
            Thread.sleep(8000);
            assertNull(service.failure(), "the outage does not stop the service");
            assertEquals(503, status(client, health));
            long restarting = System.nanoTime();
            KAFKA.restartBroker();
            long restarted = System.nanoTime();
            ServiceTestSupport.awaitTrue("ready again after the broker returns", WAIT, service::ready);
            long recovered = System.nanoTime() - restarted;
            System.out.printf("fault figures: broker down %d ms, outage noticed after %d ms; broker restart took "
                    + "%d ms, service ready %d ms after the broker was ready%n", (restarting - brokerDown) / 1_000_000,
                    noticed / 1_000_000, (restarted - restarting) / 1_000_000, recovered / 1_000_000);

            // A producer without idempotence: the test kit's broker-only restart hands out producer
            // ids again that earlier producers used, which idempotent producers created after the
            // restart trip over (the service's producer, created before, keeps its id).
            producePlain(prefix + "-tests", events.subList(half, events.size()));
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
            assertEquals(200, status(client, health));
        }
        assertNull(service.failure());
        assertEquals(events.size(), service.status().counts().outcome(Outcome.ACCEPTED),
                "every event applied once: " + service.status().counts());
        assertFinalsEqualReplay(ServiceTestSupport.replayFinals(config, prefix + "-tests", events),
                ServiceTestSupport.finalsRepeatedAlike(KAFKA, prefix + "-estimates"), regions.length);
    }

    @Test
    void anUnreachableBrokerAtTheStartKeepsTheServiceNotReadyWithAReason() throws Exception {
        int closedPort;
        try (ServerSocket probe = new ServerSocket(0, 1, java.net.InetAddress.getLoopbackAddress())) {
            closedPort = probe.getLocalPort();
        }
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml("127.0.0.1:" + closedPort, "nowhere-tests",
                "nowhere", "nowhere-group", 8, NEVER).replace("kafka:\n", "kafka:\n" + SHORT_TIMEOUTS));
        MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), "nowhere").start();
        try (service) {
            ServiceTestSupport.awaitTrue("the service to say the broker is unreachable", Duration.ofSeconds(30),
                    () -> "waiting-for-broker".equals(service.status().state()));
            assertFalse(service.ready());
            assertTrue(service.status().reason().contains("127.0.0.1:" + closedPort), service.status().reason());
            assertNull(service.failure(), "still running, retrying");
        }
    }

    // ---- hostile records ----------------------------------------------------------------------

    @Test
    void recordsOverOneMegabyteAndWithBadUtf8CostOnlyThemselves() throws Exception {
        String prefix = "hostile";
        try (var admin = KAFKA.admin()) {
            admin.createTopics(List.of(new NewTopic(prefix + "-tests", 1, (short) 1)
                    .configs(Map.of("max.message.bytes", "3000000")))).all().get();
        }
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        List<TestFeed.Event> events = TestFeed.events(47, 600, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(60), Duration.ofHours(6), "ra", "rb");
        List<byte[]> values = new ArrayList<>();
        List<String> keys = new ArrayList<>();
        events.subList(0, 300).forEach(e -> { values.add(e.json()); keys.add(e.region()); });
        int first = values.size();
        byte[] big = ("{\"id\":\"big\",\"pad\":\"" + "x".repeat(1_200_000) + "\"}").getBytes(StandardCharsets.UTF_8);
        values.add(big);
        values.add(withBytes("{\"id\":\"u1\",\"result\":\"", new byte[] {(byte) 0xf4, (byte) 0x90, (byte) 0x80, (byte) 0x80}));
        values.add(withBytes("{\"id\":\"u2\",\"result\":\"", new byte[] {(byte) 0xed, (byte) 0xa0, (byte) 0x80}));
        values.add(withBytes("{\"id\":\"u3\",\"result\":\"", new byte[] {(byte) 0xc0, (byte) 0xaf}));
        values.add("{\"id\":\"u4\",\"result\":\"\\ud800\"}".getBytes(StandardCharsets.UTF_8));
        // A long value of two-byte characters, cut inside one at the limit.
        values.add(("{\"id\":\"long\",\"pad\":\"" + "é".repeat(40_000) + "\"}").getBytes(StandardCharsets.UTF_8));
        int hostile = values.size() - first;
        for (int i = 0; i < hostile; i++) {
            keys.add("ra");
        }
        events.subList(300, events.size()).forEach(e -> { values.add(e.json()); keys.add(e.region()); });
        Properties props = KAFKA.clientProps();
        props.put(ProducerConfig.MAX_REQUEST_SIZE_CONFIG, "4000000");
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        try (KafkaProducer<String, byte[]> producer = new KafkaProducer<>(props, new StringSerializer(),
                new ByteArraySerializer())) {
            for (int i = 0; i < values.size(); i++) {
                producer.send(new ProducerRecord<>(prefix + "-tests", keys.get(i), values.get(i))).get();
            }
        }
        MonitorConfig config = config(prefix, 8, "");
        MonitorService service = new MonitorService(config, new SimpleMeterRegistry(), "hostile").start();
        try (service) {
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", prefix + "-tests", WAIT);
        }
        assertNull(service.failure(), "hostile records do not stop the service");
        assertEquals(events.size(), service.status().counts().outcome(Outcome.ACCEPTED), "every valid event accepted");
        assertEquals(hostile, service.status().counts().outcome(Outcome.REJECTED), "each hostile record rejected");

        Map<Long, JsonNode> rejects = new TreeMap<>();
        for (JsonNode reject : ServiceTestSupport.values(KAFKA, prefix + "-rejects")) {
            rejects.put(reject.path("offset").asLong(), reject);
        }
        assertEquals(hostile, rejects.size(), "one reject per hostile record: " + rejects.keySet());
        JsonNode bigReject = rejects.get((long) first);
        assertEquals("oversized", bigReject.path("reason").asText());
        assertTrue(bigReject.path("valueTruncated").asBoolean(), "the copied value says it is cut");
        assertEquals(big.length, bigReject.path("valueBytes").asInt(), "and gives the original size");
        byte[] copied = java.util.Base64.getDecoder().decode(bigReject.path("valueBase64").asText());
        assertEquals(KafkaOutputPublisher.REJECT_VALUE_LIMIT, copied.length);
        assertTrue(Arrays.equals(Arrays.copyOf(big, copied.length), copied), "a prefix of the original bytes");
        JsonNode longReject = rejects.get((long) first + hostile - 1);
        byte[] longCopied = java.util.Base64.getDecoder().decode(longReject.path("valueBase64").asText());
        // Cut before the limit at a whole character: the text copy is valid UTF-8 and present.
        assertTrue(longCopied.length <= KafkaOutputPublisher.REJECT_VALUE_LIMIT
                && longCopied.length > KafkaOutputPublisher.REJECT_VALUE_LIMIT - 4, "cut length " + longCopied.length);
        assertTrue(longReject.path("value").isTextual(), "the cut text is whole characters: " + longReject);
        for (long offset = first + 1; offset < first + 5; offset++) {
            assertEquals(prefix + "-tests", rejects.get(offset).path("topic").asText());
            assertFalse(rejects.get(offset).path("valueTruncated").asBoolean(), "short values are copied whole");
        }
    }

    private static void producePlain(String topic, List<TestFeed.Event> events) throws Exception {
        Properties props = KAFKA.clientProps();
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "false");
        props.put(ProducerConfig.MAX_IN_FLIGHT_REQUESTS_PER_CONNECTION, "1"); // retries keep the order
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        try (KafkaProducer<String, byte[]> producer = new KafkaProducer<>(props, new StringSerializer(),
                new ByteArraySerializer())) {
            List<java.util.concurrent.Future<?>> acks = new ArrayList<>();
            for (TestFeed.Event e : events) {
                acks.add(producer.send(new ProducerRecord<>(topic, null, e.time().toEpochMilli(), e.region(), e.json())));
            }
            for (var ack : acks) {
                ack.get();
            }
        }
    }

    private static byte[] withBytes(String head, byte[] bad) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        out.writeBytes(head.getBytes(StandardCharsets.UTF_8));
        out.writeBytes(bad);
        out.writeBytes("\"}".getBytes(StandardCharsets.UTF_8));
        return out.toByteArray();
    }

    private static int status(HttpClient client, String url) {
        try {
            return client.send(HttpRequest.newBuilder(URI.create(url)).timeout(Duration.ofSeconds(5)).build(),
                    HttpResponse.BodyHandlers.discarding()).statusCode();
        } catch (Exception e) {
            throw new AssertionError("GET " + url + " failed: " + e, e);
        }
    }
}
