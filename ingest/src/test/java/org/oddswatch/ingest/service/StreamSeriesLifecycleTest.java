package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;

/**
 * The per-stream series of the service's listener over a real pipeline (no broker): rejected split
 * values never become series, records are counted once per monitor with the monitor's tag, a
 * pipeline's streams leave {@code /metrics} when it is released (its partition revoked or lost),
 * and a restored open episode sets the alert-state gauge only for a stream the pipeline holds.
 */
class StreamSeriesLifecycleTest {

    private static final String INPUT = "series-tests";

    private static MonitorConfig config(int maxStreams, boolean twoMonitors) {
        String yaml = TestDefinitions.yaml("127.0.0.1:9", INPUT, "series", "series-group", maxStreams, "P3650D");
        if (twoMonitors) {
            yaml = yaml + yaml.substring(yaml.indexOf("  - name: resp")).replace("  - name: resp", "  - name: resp2");
        }
        return TestDefinitions.config(yaml);
    }

    private static byte[] event(int id, String region, Instant time) {
        return ("{\"id\":\"e" + id + "\",\"collectedAt\":\"" + time + "\",\"result\":\"" + (id % 7 == 0 ? "positive"
                : "negative") + "\",\"exposure\":{\"household\":\"" + (id % 3 == 0 ? "yes" : "no")
                + "\",\"travel\":\"no\"},\"ageBand\":\"18-39\",\"region\":\"" + region + "\"}")
                .getBytes(StandardCharsets.UTF_8);
    }

    /** One pipeline of the input reporting to the service's listener on {@code registry}. */
    private static MonitorPipeline pipeline(MonitorConfig config, MeterRegistry registry) {
        return new MonitorPipeline(INPUT + "-0", config.monitorsFor(INPUT), listener(config, registry),
                PipelineSettings.defaults().withLimits(config.limits()));
    }

    private static PipelineMeters listener(MonitorConfig config, MeterRegistry registry) {
        return new PipelineMeters(new PipelineListener() { }, registry, config.monitors());
    }

    private static Set<String> tagValues(MeterRegistry registry, String key) {
        Set<String> out = new TreeSet<>();
        for (Meter m : registry.getMeters()) {
            String v = m.getId().getTag(key);
            if (v != null && m.getId().getName().startsWith("oddswatch.")) {
                out.add(v);
            }
        }
        return out;
    }

    private static double events(MeterRegistry registry, String monitor, String stream, String reason) {
        return registry.get(OddswatchMeters.RECORDS).tag("monitor", monitor).tag("stream", stream).tag("reason", reason)
                .counter().count();
    }

    @Test
    void tenThousandTooManyStreamsRejectsAddNoSeries() {
        MonitorConfig config = config(2, false);
        MeterRegistry registry = new SimpleMeterRegistry();
        MonitorPipeline pipeline = pipeline(config, registry);
        Instant t = Instant.parse("2026-01-06T10:00:00Z");
        int id = 0;
        for (String region : List.of("north", "south", "first-rejected")) {
            pipeline.offer(event(id++, region, t), RecordOrigin.kafka(INPUT, 0, id), false);
        }
        pipeline.batchDone();
        int series = registry.getMeters().size();
        for (int i = 0; i < 10_000; i++) {
            pipeline.offer(event(id++, String.format("clinic-%05d", i), t), RecordOrigin.kafka(INPUT, 0, id), false);
        }
        pipeline.batchDone();
        assertEquals(series, registry.getMeters().size(), "no series added by 10,000 rejected split values");
        assertEquals(Set.of("resp/north", "resp/south", OddswatchMeters.NONE), tagValues(registry, "stream"));
        for (Meter m : registry.getMeters()) {
            for (Tag tag : m.getId().getTags()) {
                assertFalse(tag.getValue().contains("clinic-") || tag.getValue().contains("first-rejected"),
                        "a record value in a tag: " + m.getId());
            }
        }
        // Counted once: one increment per rejected record, in the monitor's unrouted series.
        assertEquals(10_001.0, events(registry, "resp", OddswatchMeters.NONE, "too-many-streams"));
        assertEquals(10_001, pipeline.snapshot().monitors().get(0).unrouted().consumed());
    }

    @Test
    void anUnreadableRecordCountsOncePerMonitorUnderItsName() {
        MonitorConfig config = config(8, true);
        MeterRegistry registry = new SimpleMeterRegistry();
        MonitorPipeline pipeline = pipeline(config, registry);
        assertEquals(2, config.monitorsFor(INPUT).size());
        pipeline.offer("{not json".getBytes(StandardCharsets.UTF_8), RecordOrigin.kafka(INPUT, 0, 0), false);
        pipeline.batchDone();
        assertEquals(1.0, events(registry, "resp", OddswatchMeters.NONE, "malformed-json"));
        assertEquals(1.0, events(registry, "resp2", OddswatchMeters.NONE, "malformed-json"));
        double all = registry.find(OddswatchMeters.RECORDS).counters().stream().mapToDouble(c -> c.count()).sum();
        assertEquals(2.0, all, "one count in each monitor's series, none elsewhere");
        assertEquals(Set.of("resp", "resp2"), tagValues(registry, "monitor"));
    }

    @Test
    void releasedStreamsLeaveTheRegistryAndOthersStay() {
        MonitorConfig config = config(8, false);
        MeterRegistry registry = new SimpleMeterRegistry();
        PipelineMeters listener = listener(config, registry);
        MonitorPipeline p0 = new PartitionPipelines(config, PipelineSettings.defaults().withLimits(config.limits()), listener, registry)
                .open(new TopicPartition(INPUT, 0));
        MonitorPipeline p1 = new PartitionPipelines(config, PipelineSettings.defaults().withLimits(config.limits()), listener, registry)
                .open(new TopicPartition(INPUT, 1));
        Instant start = Instant.parse("2026-01-05T06:00:00Z");
        for (int i = 0; i < 400; i++) {
            Instant t = start.plusSeconds(3600L * 6 * i); // 100 days: several final windows
            p0.offer(event(i, "north", t), RecordOrigin.kafka(INPUT, 0, i), false);
            p1.offer(event(10_000 + i, "south", t), RecordOrigin.kafka(INPUT, 1, i), false);
        }
        p0.batchDone();
        p1.batchDone();
        assertTrue(registry.find(OddswatchMeters.PREVALENCE).tag("stream", "resp/north").gauge() != null,
                "final windows set the gauges");
        assertEquals(Set.of("resp/north", "resp/south"), tagValues(registry, "stream"));
        assertEquals(2, registry.find("oddswatch.pipeline.streams").gauges().size());

        p0.release();
        assertEquals(Set.of("resp/south"), tagValues(registry, "stream"));
        assertEquals(Set.of("1"), tagValues(registry, "partition"), "the released partition's gauge is gone");

        // The stream comes back (the partition is assigned again): fresh series, counting from zero.
        MonitorPipeline again = new PartitionPipelines(config, PipelineSettings.defaults().withLimits(config.limits()), listener, registry)
                .open(new TopicPartition(INPUT, 0));
        again.offer(event(50_000, "north", start), RecordOrigin.kafka(INPUT, 0, 0), false);
        again.batchDone();
        assertEquals(1.0, registry.get(OddswatchMeters.RECORDS).tag("stream", "resp/north").tag("outcome", "accepted")
                .counter().count());
    }

    @Test
    void restoredEpisodesShowOnlyForStreamsThePipelineHolds() {
        MonitorConfig config = config(8, false);
        MeterRegistry registry = new SimpleMeterRegistry();
        MonitorPipeline pipeline = pipeline(config, registry);
        Instant t = Instant.parse("2026-03-02T10:00:00Z");
        pipeline.offer(event(1, "north", t), RecordOrigin.kafka(INPUT, 0, 0), true); // rebuilt state
        // The alerts topic holds open episodes of every stream of the monitor; south is held elsewhere.
        pipeline.restoreAlerts(List.of(open("resp/north"), open("resp/south")));
        assertEquals(Set.of("resp/north"), tagValues(registry, "stream"));
        assertEquals(1.0, registry.get(OddswatchMeters.ALERT_STATE).tag("stream", "resp/north").gauge().value());

        // South's first event in this pipeline: the stream is held here now, its open episode shows.
        pipeline.offer(event(2, "south", t), RecordOrigin.kafka(INPUT, 0, 1), false);
        assertEquals(1.0, registry.get(OddswatchMeters.ALERT_STATE).tag("stream", "resp/south").gauge().value());
    }

    private static Alert open(String stream) {
        Instant end = Instant.parse("2026-02-23T00:00:00Z");
        return new Alert("a-" + stream, stream, "odds-ratio-drift", new AlertSubject("household_contact", "yes"),
                AlertState.RAISED, end.minusSeconds(28 * 86_400L), end, "odds-ratio-z", 3.2, Measurement.Side.ABOVE, 3.1, 2.0,
                3.0, null, null, 900, "message", "command");
    }
}
