package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.BufferedWriter;
import java.lang.management.ManagementFactory;
import java.lang.management.ThreadInfo;
import java.lang.management.ThreadMXBean;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Properties;
import java.util.concurrent.TimeUnit;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * Sustained ingest rate of the live service on the embedded broker, on this machine:
 * {@code mvn -B -q -Pbench -pl ingest -am verify -Dtest=IngestThroughputBenchmarkTest
 * -Dsurefire.failIfNoSpecifiedTests=false} ({@code -Doddswatch.bench.events=N} changes the size,
 * {@code -Doddswatch.bench.clientSettings="k=v,..."} tries other consumer settings on every consumer).
 * Broker, producer, consumers and service share the machine's cores; the reports give the load
 * average and the processor count next to the figures. The target (at least 200,000 events a second
 * sustained) is read from the reports, never asserted.
 *
 * <ul>
 * <li>{@link #eventsPerSecond}: rounds of a bare consumer that only counts records and a fresh service
 *     over the same topic, back to back, and the file replay of the same events; writes
 *     {@code target/benchmark-ingest.md}.</li>
 * <li>{@link #sustainedRateOfOneRunningService}: one service that keeps running over several chunks
 *     of events, timed per chunk; writes {@code target/benchmark-ingest-steady.md}.</li>
 * </ul>
 */
@Tag("benchmark")
class IngestThroughputBenchmarkTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final int EVENTS = Integer.getInteger("oddswatch.bench.events", 1_000_000);
    private static final int ROUNDS = 5;
    private static final int WARM_ROUNDS = 2;
    /** Chunks of {@link #EVENTS} events for the one-service measurement (the first warms up). */
    private static final int CHUNKS = 6;
    private static final String[] LOOP_STEPS = {"poll", "apply", "commit"};

    @Test
    void eventsPerSecond() throws Exception {
        String topic = createTopics("bench");
        List<TestFeed.Event> events = TestFeed.events(3, EVENTS, Instant.parse("2026-01-05T00:00:00Z"),
                Duration.ofDays(140), Duration.ofHours(6), "north", "south", "west");
        long bytes = produce(topic, events);
        Path dir = Files.createTempDirectory("oddswatch-bench");
        Path file = dir.resolve("events.jsonl");
        try (BufferedWriter writer = Files.newBufferedWriter(file, StandardCharsets.UTF_8)) {
            for (TestFeed.Event e : events) {
                writer.write(e.text());
                writer.write('\n');
            }
        }
        MonitorConfig config = definition(topic, "bench-replay");
        ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("warm")));
        double[] bare = new double[ROUNDS];
        double[] service = new double[ROUNDS];
        double[] pollThreadCpu = new double[ROUNDS];
        double[][] stepNanos = new double[LOOP_STEPS.length][ROUNDS];
        for (int i = -WARM_ROUNDS; i < ROUNDS; i++) {
            // Each round: the bare consumer, then a service in a new group over the whole topic,
            // back to back, so the pair runs under the same load (the machine is shared).
            double bareRate = bareConsumerRate(topic, 0);
            MeterRegistry registry = new SimpleMeterRegistry();
            String instance = "bench-" + (i + WARM_ROUNDS);
            MonitorService running = new MonitorService(definition(topic, "bench-group-" + instance), registry,
                    instance).start();
            try (running) {
                double rate = serviceRate(registry, EVENTS);
                if (i >= 0) {
                    bare[i] = bareRate;
                    service[i] = rate;
                    pollThreadCpu[i] = threadCpuNanos("oddswatch-poll-" + instance) / (double) EVENTS;
                    for (int k = 0; k < LOOP_STEPS.length; k++) {
                        stepNanos[k][i] = registry.get("oddswatch.service.loop").tag("step", LOOP_STEPS[k]).timer()
                                .totalTime(TimeUnit.NANOSECONDS) / EVENTS;
                    }
                }
            }
            assertEquals(EVENTS, running.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
        }
        double[] replay = new double[ROUNDS];
        for (int r = 0; r < ROUNDS; r++) {
            long start = System.nanoTime();
            ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("out-" + r)));
            replay[r] = EVENTS / ((System.nanoTime() - start) / 1e9);
        }
        double[] pairs = new double[ROUNDS];
        for (int r = 0; r < ROUNDS; r++) {
            pairs[r] = service[r] / bare[r];
        }
        String report = String.format(Locale.ROOT, """
                # Ingest benchmark

                %d events (%.0f bytes each on average), one partition, three streams (split by region),
                three terms, windows of 28 days every 7 days; embedded single-node KRaft broker in the same
                JVM; %d available processors, load average %.2f at the end. The bare consumer and the
                service use the same consumer settings and are timed alike: from the first batch of
                records counted to the last, that first batch not counted. %d rounds after %d warm-up
                rounds; best and median events/s.

                | path | best | median |
                |---|---:|---:|
                | bare consumer (poll and count) | %.0f | %.0f |
                | service (decode, validate, dedupe, windows, fits, outputs, commits; one poll thread) | %.0f | %.0f |
                | ratio service / bare consumer within back-to-back pairs | %.2f | %.2f |
                | replay from a JSON Lines file | %.0f | %.0f |

                Per event (medians): the poll thread's CPU %.0f ns; wall time in the loop's steps
                (`oddswatch.service.loop`) poll %.0f ns, apply %.0f ns, commit %.0f ns.
                """, EVENTS, (double) bytes / EVENTS, Runtime.getRuntime().availableProcessors(),
                ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage(), ROUNDS, WARM_ROUNDS,
                BenchStats.best(bare), BenchStats.median(bare), BenchStats.best(service), BenchStats.median(service),
                BenchStats.best(pairs), BenchStats.median(pairs), BenchStats.best(replay), BenchStats.median(replay),
                BenchStats.median(pollThreadCpu), BenchStats.median(stepNanos[0]), BenchStats.median(stepNanos[1]),
                BenchStats.median(stepNanos[2]));
        Files.createDirectories(Path.of("target"));
        Files.writeString(Path.of("target", "benchmark-ingest.md"), report, StandardCharsets.UTF_8);
        System.out.println(report);
    }

    /**
     * The sustained rate of one service that keeps running: {@value #CHUNKS} chunks of
     * {@link #EVENTS} events that continue each other in event time are produced first and read by
     * the bare consumer; then one service reads them all, and its rate is taken per chunk as its live
     * counter passes the chunk boundaries (the first chunk is its warm-up). Neither the service's
     * start nor the JIT's work on a fresh instance falls into a measured chunk.
     */
    @Test
    void sustainedRateOfOneRunningService() throws Exception {
        String topic = createTopics("steady");
        Instant start = Instant.parse("2026-01-05T00:00:00Z");
        Duration span = Duration.ofDays(140);
        for (int c = 0; c < CHUNKS; c++) {
            // seeds differ, so ids differ between chunks; chunk c covers [start + c span, start + (c+1) span)
            produce(topic, TestFeed.events(100 + c, EVENTS, start.plus(span.multipliedBy(c)), span,
                    Duration.ofHours(6), "north", "south", "west"));
        }
        double[] bare = new double[CHUNKS];
        for (int c = 0; c < CHUNKS; c++) {
            bare[c] = bareConsumerRate(topic, (long) c * EVENTS);
        }
        MeterRegistry registry = new SimpleMeterRegistry();
        double[] service = new double[CHUNKS];
        double[] pollThreadCpu = new double[CHUNKS];
        MonitorService running = new MonitorService(definition(topic, "steady-group"), registry, "steady").start();
        try (running) {
            long deadline = System.nanoTime() + Duration.ofMinutes(20).toNanos();
            int chunk = 0;
            long chunkStart = 0;
            long cpuAtStart = 0;
            double countAtStart = 0;
            while (chunk < CHUNKS && System.nanoTime() < deadline) {
                double count = liveCount(registry);
                if (chunkStart == 0 && count > 0) {
                    chunkStart = System.nanoTime();
                    countAtStart = count;
                    cpuAtStart = threadCpuNanos("oddswatch-poll-steady");
                } else if (chunkStart != 0 && count >= (chunk + 1.0) * EVENTS) {
                    long now = System.nanoTime();
                    long cpu = threadCpuNanos("oddswatch-poll-steady");
                    service[chunk] = (count - countAtStart) / ((now - chunkStart) / 1e9);
                    pollThreadCpu[chunk] = (cpu - cpuAtStart) / (count - countAtStart);
                    chunk++;
                    chunkStart = now;
                    countAtStart = count;
                    cpuAtStart = cpu;
                }
                Thread.sleep(5);
            }
            assertEquals(CHUNKS, chunk, "every chunk read within the time allowed");
        }
        // the status counts are those of the last commit: read after the final one, at close
        assertEquals((long) CHUNKS * EVENTS, running.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
        StringBuilder table = new StringBuilder();
        for (int c = 0; c < CHUNKS; c++) {
            table.append(String.format(Locale.ROOT, "| %d%s | %.0f | %.0f | %.2f | %.0f |%n", c + 1,
                    c == 0 ? " (warm-up)" : "", bare[c], service[c], service[c] / bare[c], pollThreadCpu[c]));
        }
        double[] measured = java.util.Arrays.copyOfRange(service, 1, CHUNKS);
        String report = String.format(Locale.ROOT, """
                # Ingest benchmark: one running service

                %d chunks of %d house-scenario events on one partition (they continue each other in
                event time), the same definition and consumer settings as the main ingest benchmark;
                %d available processors, load average %.2f at the end. The bare consumer reads each
                chunk before the service starts; one service then reads all chunks without restarting,
                timed per chunk as its live counter passes the chunk boundaries.

                | chunk | bare consumer | service | service / bare | poll thread CPU ns/event |
                |---|---:|---:|---:|---:|
                %s
                Chunks 2 to %d: service median %.0f events/s, lowest %.0f, best %.0f.
                """, CHUNKS, EVENTS, Runtime.getRuntime().availableProcessors(),
                ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage(), table, CHUNKS,
                BenchStats.median(measured), BenchStats.lowest(measured), BenchStats.best(measured));
        Files.createDirectories(Path.of("target"));
        Files.writeString(Path.of("target", "benchmark-ingest-steady.md"), report, StandardCharsets.UTF_8);
        System.out.println(report);
    }

    /** The test definition over {@code topic} in consumer group {@code group}, with the settings tried. */
    private static MonitorConfig definition(String topic, String group) {
        String yaml = TestDefinitions.yaml(KAFKA.bootstrapServers(), topic, topic.replace("-tests", ""), group, 8,
                "P3650D");
        for (String[] kv : clientSettings()) {
            yaml = yaml.replace("  bootstrap.servers:", "  " + kv[0] + ": " + kv[1] + "\n  bootstrap.servers:");
        }
        return TestDefinitions.config(yaml);
    }

    /** CPU time so far of the live threads with these names, summed (ns). */
    private static long threadCpuNanos(String... names) {
        ThreadMXBean threads = ManagementFactory.getThreadMXBean();
        List<String> wanted = List.of(names);
        long sum = 0;
        for (ThreadInfo info : threads.getThreadInfo(threads.getAllThreadIds())) {
            if (info != null && wanted.contains(info.getThreadName())) {
                sum += Math.max(0, threads.getThreadCpuTime(info.getThreadId()));
            }
        }
        return sum;
    }

    /** Creates {@code prefix-tests} and the definition's three output topics, one partition each. */
    private static String createTopics(String prefix) {
        for (String suffix : List.of("tests", "estimates", "rejects", "alerts")) {
            KAFKA.createTopic(prefix + "-" + suffix, 1);
        }
        return prefix + "-tests";
    }

    private static long produce(String topic, List<TestFeed.Event> events) {
        Properties props = KAFKA.clientProps();
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.put(ProducerConfig.LINGER_MS_CONFIG, "20");
        props.put(ProducerConfig.BATCH_SIZE_CONFIG, Integer.toString(512 * 1024));
        props.put(ProducerConfig.BUFFER_MEMORY_CONFIG, Long.toString(256L << 20));
        long bytes = 0;
        try (KafkaProducer<String, byte[]> producer =
                     new KafkaProducer<>(props, new StringSerializer(), new ByteArraySerializer())) {
            for (TestFeed.Event e : events) {
                producer.send(new ProducerRecord<>(topic, e.region(), e.json()));
                bytes += e.json().length;
            }
            producer.flush();
        }
        return bytes;
    }

    /** {@code -Doddswatch.bench.clientSettings="k=v,..."}: consumer settings tried on every consumer. */
    private static List<String[]> clientSettings() {
        List<String[]> settings = new ArrayList<>();
        for (String setting : System.getProperty("oddswatch.bench.clientSettings", "").split(",")) {
            if (setting.contains("=")) {
                String[] kv = setting.split("=", 2);
                settings.add(new String[] {kv[0].trim(), kv[1].trim()});
            }
        }
        return settings;
    }

    /**
     * The bare consumer over {@link #EVENTS} records from offset {@code from} on, with the service's
     * own consumer defaults ({@link MonitorService}) and the settings tried, timed as the service is:
     * from the first records counted to the last, that first batch not counted.
     */
    private static double bareConsumerRate(String topic, long from) {
        Properties props = KAFKA.clientProps();
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, "50000");
        props.put(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, Integer.toString(4 << 20));
        props.put(ConsumerConfig.RECEIVE_BUFFER_CONFIG, "-1");
        for (String[] kv : clientSettings()) {
            if (!kv[0].equals(ConsumerConfig.GROUP_PROTOCOL_CONFIG)) {
                props.put(kv[0], kv[1]);
            }
        }
        TopicPartition tp = new TopicPartition(topic, 0);
        try (KafkaConsumer<byte[], byte[]> consumer =
                     new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer())) {
            consumer.assign(List.of(tp));
            consumer.seek(tp, from);
            long count = 0;
            long first = 0;
            long start = 0;
            while (count < EVENTS) {
                count += consumer.poll(Duration.ofMillis(200)).count();
                if (start == 0 && count > 0) {
                    start = System.nanoTime();
                    first = count;
                }
            }
            return (count - first) / ((System.nanoTime() - start) / 1e9);
        }
    }

    /** The service's live-record counter (0 before its first batch). */
    private static double liveCount(MeterRegistry registry) {
        Counter live = registry.find("oddswatch.service.records").tag("phase", "live").counter();
        return live == null ? 0 : live.count();
    }

    /**
     * From the first live records counted to {@code events}, sampled every 5 ms, not counting the
     * records already counted at the first sample (the service counts once per polled batch).
     */
    private static double serviceRate(MeterRegistry registry, long events) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofMinutes(10).toNanos();
        long start = 0;
        double first = 0;
        while (System.nanoTime() < deadline) {
            double count = liveCount(registry);
            if (count > 0 && start == 0) {
                start = System.nanoTime();
                first = count;
            }
            if (count >= events) {
                return (events - first) / ((System.nanoTime() - start) / 1e9);
            }
            Thread.sleep(5);
        }
        throw new IllegalStateException("the service did not consume the topic within 10 minutes");
    }
}
