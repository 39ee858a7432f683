package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.io.BufferedWriter;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Locale;
import java.util.Properties;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.ConsumerRecords;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.producer.KafkaProducer;
import org.apache.kafka.clients.producer.ProducerConfig;
import org.apache.kafka.clients.producer.ProducerRecord;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.serialization.ByteArrayDeserializer;
import org.apache.kafka.common.serialization.StringSerializer;
import org.apache.kafka.common.serialization.ByteArraySerializer;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.kafka.EmbeddedKafka;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;
import org.oddswatch.ingest.replay.ReplaySummary;

/**
 * Sustained ingest rate on this machine ({@code mvn -B -Pbench -pl ingest verify}): the same topic
 * read by (1) a bare consumer that only counts records and (2) the service (decode, validation,
 * dedupe, window update, window fits as the watermark passes, estimate output, offset commits);
 * their ratio; and (3) the file replay rate of the same events as JSON Lines. Writes
 * {@code target/benchmark-ingest.md}. Broker, producer and consumer share the machine's cores.
 */
@Tag("benchmark")
class IngestThroughputBenchmarkTest {

    @RegisterExtension
    static final EmbeddedKafka KAFKA = new EmbeddedKafka();

    private static final int EVENTS = Integer.getInteger("oddswatch.bench.events", 1_000_000);
    private static final int ROUNDS = 5;

    private static double best(double[] rates) {
        return java.util.Arrays.stream(rates).max().orElseThrow();
    }

    private static double lowest(double[] values) {
        return java.util.Arrays.stream(values).min().orElseThrow();
    }

    /** CPU time so far of the live threads with these names, summed (ns). */
    private static long threadCpuNanos(String... names) {
        java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
        List<String> wanted = List.of(names);
        long sum = 0;
        for (java.lang.management.ThreadInfo info : threads.getThreadInfo(threads.getAllThreadIds())) {
            if (info != null && wanted.contains(info.getThreadName())) {
                sum += Math.max(0, threads.getThreadCpuTime(info.getThreadId()));
            }
        }
        return sum;
    }

    /** Thread CPU per counted event of the last {@link #bareConsumerRate} pass (ns). */
    private static double lastBareCpuNanosPerEvent;

    private static double median(double[] rates) {
        double[] sorted = rates.clone();
        java.util.Arrays.sort(sorted);
        return sorted[sorted.length / 2];
    }

    @Test
    void eventsPerSecond() throws Exception {
        String topic = "bench-tests";
        KAFKA.createTopic(topic, 1);
        for (String out : List.of("bench-estimates", "bench-rejects", "bench-alerts")) {
            KAFKA.createTopic(out, 1);
        }
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
        // Warm-up passes first (JIT, page cache): replay twice, the bare consumer once.
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), topic, "bench",
                "bench-group", 8, "P3650D"));
        ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("warm1")));
        ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("warm2")));
        bareConsumerRate(topic);
        double[] bare = new double[ROUNDS];
        double[] bareAgain = new double[ROUNDS];
        double[] bareCpu = new double[ROUNDS];
        double[] serviceCpu = new double[ROUNDS];
        double[] service = new double[ROUNDS];
        double[] serviceNewProtocol = new double[ROUNDS];
        for (int i = 0; i < 2 * ROUNDS; i++) {
            // Each round: the bare consumer, then the service with the classic group protocol; then
            // the bare consumer again and the service with group.protocol=consumer. Each service
            // pass has a new consumer group and reads the whole topic. Pairs run back to back, so
            // the ratio of a pair is taken under the same load (the machine is shared).
            int r = i / 2;
            boolean newProtocol = i % 2 == 1;
            double bareRate = bareConsumerRate(topic);
            if (!newProtocol) {
                bare[r] = bareRate;
                bareCpu[r] = lastBareCpuNanosPerEvent;
            } else {
                bareAgain[r] = bareRate;
            }
            String yaml = TestDefinitions.yaml(KAFKA.bootstrapServers(), topic, "bench", "bench-group-" + i, 8, "P3650D");
            if (newProtocol) {
                yaml = yaml.replace("  bootstrap.servers:", "  group.protocol: consumer\n  bootstrap.servers:");
            }
            // -Doddswatch.bench.clientSettings="max.poll.records=500,..." tries other consumer settings.
            for (String setting : System.getProperty("oddswatch.bench.clientSettings", "").split(",")) {
                if (setting.contains("=")) {
                    String[] kv = setting.split("=", 2);
                    yaml = yaml.replace("  bootstrap.servers:", "  " + kv[0].trim() + ": " + kv[1].trim()
                            + "\n  bootstrap.servers:");
                }
            }
            MonitorConfig round = TestDefinitions.config(yaml);
            MeterRegistry registry = new SimpleMeterRegistry();
            // -Doddswatch.bench.jfr=FILE records a flight recording of the first service round.
            String jfr = i == 0 ? System.getProperty("oddswatch.bench.jfr") : null;
            jdk.jfr.Recording recording = null;
            if (jfr != null) {
                recording = new jdk.jfr.Recording(jdk.jfr.Configuration.getConfiguration("profile"));
                // one sample per millisecond and thread: a pass lasts only a second or two
                recording.enable("jdk.ExecutionSample").withPeriod(Duration.ofMillis(1));
                recording.start();
            }
            MonitorService running = new MonitorService(round, registry, "bench-" + i).start();
            try (running) {
                (newProtocol ? serviceNewProtocol : service)[r] = serviceRate(registry);
                if (!newProtocol) {
                    // the poll and worker threads, from their start (group join included)
                    serviceCpu[r] = threadCpuNanos("oddswatch-poll-bench-" + i, "oddswatch-pipeline-bench-" + i)
                            / (double) EVENTS;
                }
            }
            if (recording != null) {
                recording.dump(Path.of(jfr));
                recording.close();
            }
            assertEquals(EVENTS, running.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
        }

        double[] replay = new double[ROUNDS];
        ReplaySummary summary = null;
        for (int r = 0; r < ROUNDS; r++) {
            long start = System.nanoTime();
            summary = ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("out-" + r)));
            replay[r] = EVENTS / ((System.nanoTime() - start) / 1e9);
        }
        double[] allBare = java.util.stream.DoubleStream.concat(java.util.Arrays.stream(bare),
                java.util.Arrays.stream(bareAgain)).toArray();
        double[] pairs = new double[ROUNDS];
        double[] pairsNewProtocol = new double[ROUNDS];
        for (int r = 0; r < ROUNDS; r++) {
            pairs[r] = service[r] / bare[r];
            pairsNewProtocol[r] = serviceNewProtocol[r] / bareAgain[r];
        }
        String report = String.format(Locale.ROOT, """
                # Ingest benchmark

                %d events (%.0f bytes each on average), one partition, three streams (split by region),
                three terms, windows of 28 days every 7 days; embedded single-node KRaft broker in the same
                JVM; %d available processors. Each path is measured after warm-up passes (JIT). The bare
                consumer and the service use the same consumer settings (4 MiB partition fetches, up to
                50,000 records per poll) and are timed alike: from the first batch of records counted to the
                last record, that first batch not counted.

                %d rounds of each service pass, each right after a bare-consumer pass; best and median
                events/s (the machine is shared, so the best round is the fairest figure of what the code
                can do; the median shows the spread). The pair ratios compare passes run back to back.

                | path | best | median |
                |---|---:|---:|
                | bare consumer (poll and count) | %.0f | %.0f |
                | service (decode, validate, dedupe, windows, fits, outputs, commits) | %.0f | %.0f |
                | ratio service / bare consumer (of the best; of the medians) | %.2f | %.2f |
                | ratio within back-to-back pairs (best pair; median pair) | %.2f | %.2f |
                | service, `group.protocol=consumer` (KIP-848 consumer, background fetching) | %.0f | %.0f |
                | ratio within back-to-back pairs, that / bare consumer | %.2f | %.2f |
                | replay from a JSON Lines file | %.0f | %.0f |

                CPU per event (lowest; median), in nanoseconds of thread CPU time: the service's poll and
                worker threads together %.0f; %.0f (classic protocol passes); the bare consumer's thread
                %.0f; %.0f. (With `group.protocol=consumer` part of the consumer's work runs on its own
                background thread, which is not counted, so those passes are left out.)

                Replay wrote %d final estimates. Load average at the end: %.1f. Garbage collector: %s
                (the bench profile uses ParallelGC, as the launcher and the image do; G1 figures:
                `-Dtest.jvm.args="-Xmx2g -XX:+UseG1GC"`).
                """, EVENTS, (double) bytes / EVENTS, Runtime.getRuntime().availableProcessors(), ROUNDS,
                best(allBare), median(allBare), best(service), median(service), best(service) / best(allBare),
                median(service) / median(allBare), best(pairs), median(pairs), best(serviceNewProtocol),
                median(serviceNewProtocol), best(pairsNewProtocol), median(pairsNewProtocol), best(replay), median(replay),
                lowest(serviceCpu), median(serviceCpu), lowest(bareCpu), median(bareCpu), summary.finalWindows(),
                java.lang.management.ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage(),
                java.lang.management.ManagementFactory.getGarbageCollectorMXBeans().stream()
                        .map(java.lang.management.GarbageCollectorMXBean::getName)
                        .collect(java.util.stream.Collectors.joining(", ")));
        Files.writeString(Path.of("target", "benchmark-ingest.md"), report, StandardCharsets.UTF_8);
        System.out.println(report);
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

    private static double bareConsumerRate(String topic) {
        Properties props = KAFKA.clientProps();
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        // The service's own defaults (MonitorService), so both read the topic the same way.
        props.put(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, "50000");
        props.put(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, Integer.toString(4 << 20));
        TopicPartition tp = new TopicPartition(topic, 0);
        try (KafkaConsumer<byte[], byte[]> consumer =
                     new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer())) {
            consumer.assign(List.of(tp));
            consumer.seekToBeginning(List.of(tp));
            consumer.position(tp);
            // Timed as the service is: from the first records counted to the last, not counting
            // that first batch.
            java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
            long count = 0;
            long first = 0;
            long start = 0;
            long startCpu = 0;
            while (count < EVENTS) {
                ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(200));
                count += records.count();
                if (start == 0 && count > 0) {
                    start = System.nanoTime();
                    startCpu = threads.getCurrentThreadCpuTime();
                    first = count;
                }
            }
            lastBareCpuNanosPerEvent = (threads.getCurrentThreadCpuTime() - startCpu) / (double) (count - first);
            return (count - first) / ((System.nanoTime() - start) / 1e9);
        }
    }

    /**
     * From the first live records counted to the last, sampled every 5 ms, not counting the records
     * already counted at the first sample (the service counts once per batch).
     */
    private static double serviceRate(MeterRegistry registry) throws InterruptedException {
        long deadline = System.nanoTime() + Duration.ofMinutes(10).toNanos();
        long start = 0;
        double first = 0;
        while (System.nanoTime() < deadline) {
            double count = registry.find("oddswatch.service.records").tag("phase", "live").counter() == null ? 0
                    : registry.get("oddswatch.service.records").tag("phase", "live").counter().count();
            if (count > 0 && start == 0) {
                start = System.nanoTime();
                first = count;
            }
            if (count >= EVENTS) {
                return (EVENTS - first) / ((System.nanoTime() - start) / 1e9);
            }
            Thread.sleep(5);
        }
        throw new IllegalStateException("the service did not consume the topic within 10 minutes");
    }
}
