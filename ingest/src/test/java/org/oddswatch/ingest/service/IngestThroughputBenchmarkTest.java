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
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final int EVENTS = Integer.getInteger("oddswatch.bench.events", 1_000_000);
    private static final int ROUNDS = 5;
    private static final int WARM_ROUNDS = 2;
    /** Chunks of {@link #EVENTS} events for the one-service measurement (the first warms up). */
    private static final int CHUNKS = 6;



    /** CPU time so far of the live threads with these names, summed (ns). */
    private static long threadCpuNanos(String... names) {
        return sumOverThreads(java.lang.management.ManagementFactory.getThreadMXBean()::getThreadCpuTime, names);
    }

    /** Bytes allocated so far by the live threads with these names, summed. */
    private static long threadAllocatedBytes(String... names) {
        return sumOverThreads(((com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory
                .getThreadMXBean())::getThreadAllocatedBytes, names);
    }

    /** {@code perThread} (by thread id; negative: unknown) summed over the live threads with these names. */
    private static long sumOverThreads(java.util.function.LongUnaryOperator perThread, String... names) {
        java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
        List<String> wanted = List.of(names);
        long sum = 0;
        for (java.lang.management.ThreadInfo info : threads.getThreadInfo(threads.getAllThreadIds())) {
            if (info != null && wanted.contains(info.getThreadName())) {
                sum += Math.max(0, perThread.applyAsLong(info.getThreadId()));
            }
        }
        return sum;
    }

    /** Thread CPU per counted event of the last {@link #bareConsumerRate} pass (ns). */
    private static double lastBareCpuNanosPerEvent;


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
        // Warm-up passes first (JIT, page cache): replay twice, the bare consumer once, and
        // WARM_ROUNDS rounds of the service loop below (without them the compiler threads still
        // used about as much CPU as one service thread during the first measured passes).
        MonitorConfig config = TestDefinitions.config(TestDefinitions.yaml(KAFKA.bootstrapServers(), topic, "bench",
                "bench-group", 8, "P3650D"));
        ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("warm1")));
        ReplayRunner.run(config, ReplayRequest.of(null, file, dir.resolve("warm2")));
        bareConsumerRate(topic);
        double[] bare = new double[ROUNDS];
        double[] bareAgain = new double[ROUNDS];
        double[] bareCpu = new double[ROUNDS];
        double[] floor = new double[ROUNDS];
        double[] floorCpu = new double[ROUNDS];
        double[] floorShare = new double[ROUNDS];
        double[] serviceCpu = new double[ROUNDS];
        double[] service = new double[ROUNDS];
        double[] serviceNewProtocol = new double[ROUNDS];
        // wall time per event in each step of the loop (oddswatch.service.loop), classic passes
        double[] gcShare = new double[ROUNDS];
        double[] pollBytes = new double[ROUNDS];
        double[] workerBytes = new double[ROUNDS];
        double[] processCpu = new double[ROUNDS];
        java.util.Map<String, double[]> cpuByGroup = new java.util.TreeMap<>();
        String[] steps = {"poll", "read", "wait", "apply"};
        double[][] stepNanos = new double[steps.length][ROUNDS];
        for (int i = -2 * WARM_ROUNDS; i < 2 * ROUNDS; i++) {
            // Each round: the bare consumer, then the service with the classic group protocol; then
            // the bare consumer again and the service with group.protocol=consumer. Each service
            // pass has a new consumer group and reads the whole topic. Pairs run back to back, so
            // the ratio of a pair is taken under the same load (the machine is shared).
            boolean measured = i >= 0;
            int r = measured ? i / 2 : 0;
            boolean newProtocol = Math.floorMod(i, 2) == 1;
            double bareRate = bareConsumerRate(topic);
            if (!measured) {
                // warm-up round: nothing kept
            } else if (!newProtocol) {
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
            for (String[] kv : clientSettings()) {
                yaml = yaml.replace("  bootstrap.servers:", "  " + kv[0] + ": " + kv[1] + "\n  bootstrap.servers:");
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
            long gcBefore = gcMillis();
            long processCpuBefore = processCpuNanos();
            java.util.Map<String, Long> threadsBefore = cpuByThreadGroup();
            long passStart = System.nanoTime();
            MonitorService running = new MonitorService(round, registry, "bench-" + i).start();
            try (running) {
                double rate = serviceRate(registry);
                if (measured) {
                    (newProtocol ? serviceNewProtocol : service)[r] = rate;
                }
                if (measured && !newProtocol) {
                    gcShare[r] = (gcMillis() - gcBefore) * 1e6 / (System.nanoTime() - passStart);
                    processCpu[r] = (processCpuNanos() - processCpuBefore) / (double) EVENTS;
                    java.util.Map<String, Long> after = cpuByThreadGroup();
                    after.forEach((group, nanos) -> cpuByGroup.computeIfAbsent(group, g -> new double[ROUNDS])[r] =
                            (nanos - threadsBefore.getOrDefault(group, 0L)) / (double) EVENTS);
                }
                if (measured && !newProtocol) {
                    // the poll and worker threads, from their start (group join included)
                    serviceCpu[r] = threadCpuNanos("oddswatch-poll-bench-" + i, "oddswatch-pipeline-bench-" + i)
                            / (double) EVENTS;
                    pollBytes[r] = threadAllocatedBytes("oddswatch-poll-bench-" + i) / (double) EVENTS;
                    workerBytes[r] = threadAllocatedBytes("oddswatch-pipeline-bench-" + i) / (double) EVENTS;
                    for (int k = 0; k < steps.length; k++) {
                        stepNanos[k][r] = registry.get("oddswatch.service.loop").tag("step", steps[k]).timer()
                                .totalTime(java.util.concurrent.TimeUnit.NANOSECONDS) / EVENTS;
                    }
                }
            }
            if (recording != null) {
                recording.dump(Path.of(jfr));
                recording.close();
            }
            assertEquals(EVENTS, running.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
            if (!newProtocol) {
                // the parsing floor of this round, right after its service pass
                double floorRate = parsingFloorRate(topic);
                if (measured) {
                    floor[r] = floorRate;
                    floorCpu[r] = lastFloorCpuNanosPerEvent;
                    floorShare[r] = lastFloorShare;
                }
            }
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
        double[] floorPairs = new double[ROUNDS];
        double[] serviceToFloor = new double[ROUNDS];
        for (int r = 0; r < ROUNDS; r++) {
            floorPairs[r] = floor[r] / bare[r];
            serviceToFloor[r] = service[r] / floor[r];
            pairs[r] = service[r] / bare[r];
            pairsNewProtocol[r] = serviceNewProtocol[r] / bareAgain[r];
        }
        String report = String.format(Locale.ROOT, """
                # Ingest benchmark

                %d events (%.0f bytes each on average), one partition, three streams (split by region),
                three terms, windows of 28 days every 7 days; embedded single-node KRaft broker in the same
                JVM; %d available processors. Each path is measured after warm-up passes (JIT). The bare
                consumer and the service use the same consumer settings (4 MiB partition fetches, up to
                50,000 records per poll, socket receive buffer left to the operating system) and are timed alike: from the first batch of records counted to the
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
                | Jackson parsing floor: poll and token walk only, two threads (see below) | %.0f | %.0f |
                | ratio within rounds, floor / bare consumer (best; median) | %.2f | %.2f |
                | ratio within rounds, service / floor (best; median) | %.2f | %.2f |

                The parsing floor is a consumer built like the service (the poll thread reads a share of
                each batch, a second thread the rest during the next poll) that only walks each record's
                JSON tokens with Jackson: nothing decoded, validated, deduplicated or counted into
                windows. No service that decodes with Jackson on this machine can be faster, so the
                floor's ratio to the bare consumer bounds the service's. It runs right after the bare
                consumer and the service in each classic round; its threads used %.0f; %.0f ns of CPU per event (lowest;
                median); the poll thread's share of the walk ended at %.2f (median; balanced by the
                service's rule unless -Doddswatch.bench.floorShare fixes it).

                CPU per event (lowest; median), in nanoseconds of thread CPU time: the service's poll and
                worker threads together %.0f; %.0f (classic protocol passes); the bare consumer's thread
                %.0f; %.0f. (With `group.protocol=consumer` part of the consumer's work runs on its own
                background thread, which is not counted, so those passes are left out.) The whole JVM
                (broker, producer, collector and compiler threads too) used %.0f ns of CPU per event
                during a classic service pass (median), the two cores give 2 x 10^9 ns per second.

                Wall time per event in the steps of the loop (median of the classic passes, ns; meter
                `oddswatch.service.loop`): the poll thread in `poll` %.0f, reading its share %.0f, waiting
                for the worker %.0f; the worker reading the rest and applying %.0f. Garbage collection
                took %.0f%% of a classic pass (median; pauses stop both threads); the poll thread
                allocated %.0f bytes per event, the worker %.0f (median, from the threads' start).

                Replay wrote %d final estimates. Load average at the end: %.1f. Garbage collector: %s
                (the bench profile uses ParallelGC, as the launcher and the image do; G1 figures:
                `-Dtest.jvm.args="-Xmx2g -XX:+UseG1GC"`).
                """, EVENTS, (double) bytes / EVENTS, Runtime.getRuntime().availableProcessors(), ROUNDS,
                BenchStats.best(allBare), BenchStats.median(allBare), BenchStats.best(service), BenchStats.median(service), BenchStats.best(service) / BenchStats.best(allBare),
                BenchStats.median(service) / BenchStats.median(allBare), BenchStats.best(pairs), BenchStats.median(pairs), BenchStats.best(serviceNewProtocol),
                BenchStats.median(serviceNewProtocol), BenchStats.best(pairsNewProtocol), BenchStats.median(pairsNewProtocol), BenchStats.best(replay), BenchStats.median(replay),
                BenchStats.best(floor), BenchStats.median(floor), BenchStats.best(floorPairs), BenchStats.median(floorPairs),
                BenchStats.best(serviceToFloor), BenchStats.median(serviceToFloor),
                BenchStats.lowest(floorCpu), BenchStats.median(floorCpu), BenchStats.median(floorShare),
                BenchStats.lowest(serviceCpu), BenchStats.median(serviceCpu), BenchStats.lowest(bareCpu), BenchStats.median(bareCpu), BenchStats.median(processCpu),
                BenchStats.median(stepNanos[0]),
                BenchStats.median(stepNanos[1]), BenchStats.median(stepNanos[2]), BenchStats.median(stepNanos[3]), 100 * BenchStats.median(gcShare),
                BenchStats.median(pollBytes), BenchStats.median(workerBytes),
                summary.finalWindows(),
                java.lang.management.ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage(),
                java.lang.management.ManagementFactory.getGarbageCollectorMXBeans().stream()
                        .map(java.lang.management.GarbageCollectorMXBean::getName)
                        .collect(java.util.stream.Collectors.joining(", ")));
        StringBuilder byGroup = new StringBuilder(String.format(Locale.ROOT,
                "%nCPU per event by thread kind during the classic service passes (median ns; threads"
                        + " that ended during a pass are missed):%n%n| threads | ns/event |%n|---|---:|%n"));
        cpuByGroup.entrySet().stream()
                .sorted((a, b) -> Double.compare(BenchStats.median(b.getValue()), BenchStats.median(a.getValue())))
                .filter(e -> BenchStats.median(e.getValue()) >= 5)
                .forEach(e -> byGroup.append(String.format(Locale.ROOT, "| %s | %.0f |%n", e.getKey(),
                        BenchStats.median(e.getValue()))));
        report = report + byGroup;
        Files.writeString(Path.of("target", "benchmark-ingest.md"), report, StandardCharsets.UTF_8);
        System.out.println(report);
    }

    /**
     * The sustained rate of one service that keeps running: {@value #CHUNKS} chunks of
     * {@link #EVENTS} events that continue each other in event time are produced first; the bare
     * consumer reads each chunk (before the service starts and again after it is done); then one
     * service reads them all, and its rate is taken per chunk as the live counter passes the chunk
     * boundaries (the first chunk is its warm-up). Unlike the passes of {@link #eventsPerSecond},
     * the service is not started for each measurement, so neither its start nor the JIT's work on
     * a fresh instance falls into a measured chunk. Writes {@code target/benchmark-ingest-steady.md}.
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
        double[][] bare = new double[2][CHUNKS];
        for (int c = 0; c < CHUNKS; c++) {
            bare[0][c] = bareConsumerRate(topic, (long) c * EVENTS);
        }
        String yaml = TestDefinitions.yaml(KAFKA.bootstrapServers(), topic, "steady", "steady-group", 8, "P3650D");
        for (String[] kv : clientSettings()) {
            yaml = yaml.replace("  bootstrap.servers:", "  " + kv[0] + ": " + kv[1] + "\n  bootstrap.servers:");
        }
        MonitorConfig config = TestDefinitions.config(yaml);
        MeterRegistry registry = new SimpleMeterRegistry();
        double[] service = new double[CHUNKS];
        double[] serviceCpu = new double[CHUNKS];
        double[] compilerCpu = new double[CHUNKS];
        double[] processCpu = new double[CHUNKS];
        MonitorService running = new MonitorService(config, registry, "steady").start();
        try (running) {
            long deadline = System.nanoTime() + Duration.ofMinutes(20).toNanos();
            int chunk = 0;
            long chunkStart = 0;
            long cpuAtStart = 0;
            long compilerAtStart = 0;
            long processAtStart = 0;
            double countAtStart = 0;
            while (chunk < CHUNKS && System.nanoTime() < deadline) {
                double count = liveCount(registry);
                if (chunkStart == 0 && count > 0) {
                    chunkStart = System.nanoTime();
                    countAtStart = count;
                    cpuAtStart = threadCpuNanos("oddswatch-poll-steady", "oddswatch-pipeline-steady");
                    compilerAtStart = compilerNanos();
                    processAtStart = processCpuNanos();
                } else if (chunkStart != 0 && count >= (chunk + 1.0) * EVENTS) {
                    long now = System.nanoTime();
                    double events = count - countAtStart;
                    service[chunk] = events / ((now - chunkStart) / 1e9);
                    long cpu = threadCpuNanos("oddswatch-poll-steady", "oddswatch-pipeline-steady");
                    long compiler = compilerNanos();
                    long process = processCpuNanos();
                    serviceCpu[chunk] = (cpu - cpuAtStart) / events;
                    compilerCpu[chunk] = (compiler - compilerAtStart) / events;
                    processCpu[chunk] = (process - processAtStart) / events;
                    chunk++;
                    chunkStart = now;
                    countAtStart = count;
                    cpuAtStart = cpu;
                    compilerAtStart = compiler;
                    processAtStart = process;
                }
                Thread.sleep(5);
            }
            assertEquals(CHUNKS, chunk, "every chunk read within the time allowed");
        }
        // the status counts are those of the last commit: read after the final one, at close
        assertEquals((long) CHUNKS * EVENTS, running.status().counts().outcome(Outcome.ACCEPTED), "every event accepted");
        for (int c = 0; c < CHUNKS; c++) {
            bare[1][c] = bareConsumerRate(topic, (long) c * EVENTS);
        }
        double[] measured = java.util.Arrays.copyOfRange(service, 1, CHUNKS);
        double[] allBare = java.util.stream.DoubleStream.concat(java.util.Arrays.stream(bare[0]),
                java.util.Arrays.stream(bare[1])).toArray();
        StringBuilder table = new StringBuilder();
        for (int c = 0; c < CHUNKS; c++) {
            table.append(String.format(Locale.ROOT, "| %d%s | %.0f | %.0f | %.0f | %.2f | %.0f | %.0f | %.0f |%n", c + 1,
                    c == 0 ? " (warm-up)" : "", bare[0][c], bare[1][c], service[c],
                    service[c] / Math.max(bare[0][c], bare[1][c]), serviceCpu[c], compilerCpu[c], processCpu[c]));
        }
        String report = String.format(Locale.ROOT, """
                # Ingest benchmark: one running service

                %d chunks of %d house-scenario events on one partition (they continue each other in
                event time), the same definition and consumer settings as the main ingest benchmark.
                The bare consumer reads each chunk before the service starts and again after it has
                finished; one service then reads all chunks without restarting, timed per chunk as its
                live counter passes the chunk boundaries. CPU columns: ns per event of the service's
                poll and worker threads, of the JIT compiler threads, and of the whole JVM.

                | chunk | bare before | bare after | service | service / faster bare | service threads CPU | compiler CPU | JVM CPU |
                |---|---:|---:|---:|---:|---:|---:|---:|
                %s
                Chunks 2 to %d: service median %.0f events/s, best %.0f; bare consumer median %.0f;
                ratio of the medians %.2f.
                """, CHUNKS, EVENTS, table, CHUNKS, BenchStats.median(measured), BenchStats.best(measured), BenchStats.median(allBare),
                BenchStats.median(measured) / BenchStats.median(allBare));
        Files.writeString(Path.of("target", "benchmark-ingest-steady.md"), report, StandardCharsets.UTF_8);
        System.out.println(report);
    }

    /** Thread CPU per event of the last {@link #parsingFloorRate} pass, both threads (ns). */
    private static double lastFloorCpuNanosPerEvent;
    /** The poll thread's share of the walk at the end of the last {@link #parsingFloorRate} pass. */
    private static double lastFloorShare;

    /**
     * The floor of any service that decodes with Jackson, passed in each classic round of
     * {@link #eventsPerSecond} right after the service: a consumer built like the service (the poll
     * thread reads a share of each batch, a second thread the rest while the next poll runs, the
     * share balanced by the service's own {@link ReadShare} rule) that only walks each record's JSON
     * tokens ({@code nextToken} to the end, one parser per record, no values taken, nothing decoded,
     * no dedupe, no windows). The service does all of that and more, so this rate bounds the
     * service's on this machine. {@code -Doddswatch.bench.floorShare=F} fixes the poll thread's share
     * instead.
     */
    private static double parsingFloorRate(String topic) throws Exception {
        Properties props = benchConsumerProps();
        com.fasterxml.jackson.core.JsonFactory json = new com.fasterxml.jackson.core.JsonFactory();
        java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
        java.util.concurrent.ExecutorService walker = java.util.concurrent.Executors.newSingleThreadExecutor(
                r -> new Thread(r, "floor-walker"));
        TopicPartition tp = new TopicPartition(topic, 0);
        try (KafkaConsumer<byte[], byte[]> consumer =
                     new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer())) {
            consumer.assign(List.of(tp));
            consumer.seekToBeginning(List.of(tp));
            consumer.position(tp);
            long walkerStart = walker.submit(threads::getCurrentThreadCpuTime).get();
            java.util.concurrent.Future<Long> pending = java.util.concurrent.CompletableFuture.completedFuture(0L);
            long count = 0;
            long first = 0;
            long start = 0;
            long startCpu = 0;
            long tokens = 0;
            ReadShare share = new ReadShare();
            double fixedShare = Double.parseDouble(System.getProperty("oddswatch.bench.floorShare", "-1"));
            while (count < EVENTS) {
                ConsumerRecords<byte[], byte[]> records = consumer.poll(Duration.ofMillis(200));
                int n = records.count();
                byte[][] values = new byte[n][];
                int k = 0;
                for (org.apache.kafka.clients.consumer.ConsumerRecord<byte[], byte[]> record : records) {
                    values[k++] = record.value();
                }
                int half = fixedShare >= 0 ? (int) (n * fixedShare) : share.of(n);
                tokens += walk(json, values, 0, half);
                if (count > 0) {
                    share.adjust(!pending.isDone());
                }
                tokens += pending.get();
                count += n;
                if (start == 0 && count > 0) {
                    // timed as the bare consumer: from the first batch on, that batch not counted
                    // (the walker is idle here, so its CPU time is read at once)
                    start = System.nanoTime();
                    startCpu = threads.getCurrentThreadCpuTime() + walker.submit(threads::getCurrentThreadCpuTime).get()
                            - walkerStart;
                    first = count;
                }
                pending = walker.submit(() -> walk(json, values, half, n));
            }
            tokens += pending.get();
            long end = System.nanoTime();
            long cpu = threads.getCurrentThreadCpuTime() + walker.submit(threads::getCurrentThreadCpuTime).get()
                    - walkerStart;
            // the same count as the stage benchmark's walk of these records (TestFeed events)
            assertEquals(19L * count, tokens, "19 tokens per record, every record walked");
            lastFloorCpuNanosPerEvent = (cpu - startCpu) / (double) (count - first);
            lastFloorShare = fixedShare >= 0 ? fixedShare : share.fraction();
            return (count - first) / ((end - start) / 1e9);
        } finally {
            walker.shutdownNow();
        }
    }

    /** Walks the tokens of records {@code [from, to)}, one parser each; returns the token count. */
    private static long walk(com.fasterxml.jackson.core.JsonFactory json, byte[][] values, int from, int to)
            throws IOException {
        long tokens = 0;
        for (int i = from; i < to; i++) {
            try (com.fasterxml.jackson.core.JsonParser parser = json.createParser(values[i])) {
                while (parser.nextToken() != null) {
                    tokens++;
                }
            }
        }
        return tokens;
    }

    /** Creates {@code prefix-tests} and the definition's three output topics, one partition each. */
    private static String createTopics(String prefix) {
        for (String suffix : List.of("tests", "estimates", "rejects", "alerts")) {
            KAFKA.createTopic(prefix + "-" + suffix, 1);
        }
        return prefix + "-tests";
    }

    /** CPU time so far of the JIT compiler threads, from /proc (0 where there is none), in ns. */
    private static long compilerNanos() {
        return vmThreadCpu().entrySet().stream().filter(e -> e.getKey().contains("CompilerThre"))
                .mapToLong(java.util.Map.Entry::getValue).sum();
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

    /**
     * CPU time so far of the live threads, summed by kind: thread names with digits and instance
     * names blanked out (so the broker's request handlers are one kind), in ns.
     */
    private static java.util.Map<String, Long> cpuByThreadGroup() {
        java.lang.management.ThreadMXBean threads = java.lang.management.ManagementFactory.getThreadMXBean();
        java.util.Map<String, Long> byGroup = new java.util.HashMap<>();
        for (java.lang.management.ThreadInfo info : threads.getThreadInfo(threads.getAllThreadIds())) {
            if (info != null) {
                String group = info.getThreadName().replaceAll("bench-group-\\d+", "bench-group")
                        .replaceAll("bench-\\d+", "bench").replaceAll("\\d+", "#");
                byGroup.merge(group, Math.max(0, threads.getThreadCpuTime(info.getThreadId())), Long::sum);
            }
        }
        byGroup.putAll(vmThreadCpu());
        return byGroup;
    }

    /**
     * The JVM's own threads (collector, compilers, VM thread), which the thread bean does not
     * list: from {@code /proc/self/task/<id>/stat} (Linux; clock ticks of 10 ms), by name with
     * digits blanked out, prefixed "JVM: ". Empty where there is no such file system.
     */
    private static java.util.Map<String, Long> vmThreadCpu() {
        java.util.Map<String, Long> byName = new java.util.HashMap<>();
        java.io.File[] tasks = new java.io.File("/proc/self/task").listFiles();
        if (tasks == null) {
            return byName;
        }
        for (java.io.File task : tasks) {
            try {
                String stat = Files.readString(task.toPath().resolve("stat"));
                String name = stat.substring(stat.indexOf('(') + 1, stat.lastIndexOf(')'));
                if (!(name.startsWith("GC ") || name.startsWith("C1 ") || name.startsWith("C2 ")
                        || name.startsWith("VM ") || name.startsWith("G1 "))) {
                    continue;
                }
                String[] fields = stat.substring(stat.lastIndexOf(')') + 2).split(" ");
                // fields[11] and [12] are utime and stime (fields 14 and 15 of the whole line)
                long ticks = Long.parseLong(fields[11]) + Long.parseLong(fields[12]);
                byName.merge("JVM: " + name.replaceAll("\\d+", "#"), ticks * 10_000_000L, Long::sum);
            } catch (IOException | RuntimeException e) {
                // a thread that ended while being read
            }
        }
        return byName;
    }

    /** CPU time so far of the whole JVM: broker, clients, collector and compiler threads included (ns). */
    private static long processCpuNanos() {
        return ((com.sun.management.OperatingSystemMXBean) java.lang.management.ManagementFactory
                .getOperatingSystemMXBean()).getProcessCpuTime();
    }

    /** Collection time so far of all collectors (ms). */
    private static long gcMillis() {
        return java.lang.management.ManagementFactory.getGarbageCollectorMXBeans().stream()
                .mapToLong(java.lang.management.GarbageCollectorMXBean::getCollectionTime).sum();
    }

    /** {@code -Doddswatch.bench.clientSettings="k=v,..."}: consumer settings tried on both paths. */
    private static List<String[]> clientSettings() {
        List<String[]> settings = new java.util.ArrayList<>();
        for (String setting : System.getProperty("oddswatch.bench.clientSettings", "").split(",")) {
            if (setting.contains("=")) {
                String[] kv = setting.split("=", 2);
                settings.add(new String[] {kv[0].trim(), kv[1].trim()});
            }
        }
        return settings;
    }

    /**
     * Settings of the consumers beside the service (bare, parsing floor): the service's own defaults
     * (MonitorService), so all read the topic the same way, and the settings tried on the service
     * ({@code -Doddswatch.bench.clientSettings}) but for the group protocol.
     */
    private static Properties benchConsumerProps() {
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
        return props;
    }

    private static double bareConsumerRate(String topic) {
        return bareConsumerRate(topic, -1);
    }

    /** The bare consumer over {@link #EVENTS} records from {@code from} on (-1: the beginning). */
    private static double bareConsumerRate(String topic, long from) {
        Properties props = benchConsumerProps();
        TopicPartition tp = new TopicPartition(topic, 0);
        try (KafkaConsumer<byte[], byte[]> consumer =
                     new KafkaConsumer<>(props, new ByteArrayDeserializer(), new ByteArrayDeserializer())) {
            consumer.assign(List.of(tp));
            if (from < 0) {
                consumer.seekToBeginning(List.of(tp));
            } else {
                consumer.seek(tp, from);
            }
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

    /** The service's live-record counter (0 before its first batch). */
    private static double liveCount(MeterRegistry registry) {
        io.micrometer.core.instrument.Counter live = registry.find("oddswatch.service.records").tag("phase", "live")
                .counter();
        return live == null ? 0 : live.count();
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
            double count = liveCount(registry);
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
