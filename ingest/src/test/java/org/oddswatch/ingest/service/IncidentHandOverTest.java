package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Stream;
import org.apache.kafka.common.utils.Utils;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.RegisterExtension;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.live.WebAnswer;
import org.oddswatch.broker.EmbeddedBrokerExtension;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.replay.ReplayRequest;
import org.oddswatch.ingest.replay.ReplayRunner;

/**
 * A partition handed over to a second instance and back while its stream's incident changes: the
 * first instance opens an incident on each of two split streams (one per partition); a second
 * instance joins and takes one partition, and there the incident resolves; the second instance
 * leaves, the partition comes back, and a new drift on both streams opens new incidents. The
 * incident messages the two instances sent together are unique by (id, revision), one
 * {@code opened} per id, none after an id's {@code resolved}, and each is a message of a replay of
 * all events, byte for byte. Without the release and the restore's newer-revision rule the first
 * instance kept the handed-over incident open, and the new rise on its stream updated it under a
 * revision the second instance had already sent (after its resolution) instead of opening a new
 * incident (checked by hand: it fails on the repeated revision).
 */
class IncidentHandOverTest {

    @RegisterExtension
    static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();

    private static final Duration WAIT = Duration.ofSeconds(120);
    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    /** Where the first part ends: the household-contact odds ratio has risen since 2026-04-06. */
    private static final Instant HAND_OVER = Instant.parse("2026-05-04T00:00:00Z");
    /** Nine weeks at the baseline's odds ratio (the drift clears), then nine weeks of a new rise. */
    private static final Instant HAND_BACK = HAND_OVER.plus(Duration.ofDays(63));

    @Test
    void anIncidentResolvedByTheOtherInstanceIsNeitherRevivedNorRepeatedWhenItsPartitionComesBack(@TempDir Path dir)
            throws Exception {
        String prefix = "handover";
        String input = prefix + "-tests";
        KAFKA.createTopic(input, 2);
        for (String out : List.of("-estimates", "-rejects", "-alerts")) {
            KAFKA.createTopic(prefix + out, 1);
        }
        String[] regions = onBothPartitions();
        List<TestFeed.Event> rise = TestFeed.events(45, 17000, START, Duration.between(START, HAND_OVER), Duration.ZERO,
                Instant.parse("2026-04-06T00:00:00Z"), 1.5, regions);
        List<TestFeed.Event> back = TestFeed.events(46, 9000, HAND_OVER, Duration.between(HAND_OVER, HAND_BACK),
                Duration.ZERO, regions);
        List<TestFeed.Event> again = TestFeed.events(47, 9000, HAND_BACK, Duration.ofDays(63), Duration.ZERO,
                HAND_BACK, 1.5, regions);
        MonitorConfig config = TestDefinitions.config(TestDefinitions.driftYaml(KAFKA.bootstrapServers(), prefix, input,
                null).replace("    terms:", "    split: {field: /region, maxStreams: 4}\n    terms:"));

        ServiceTestSupport.produce(KAFKA, input, rise, true);
        List<JsonNode> ofA;
        List<JsonNode> ofB;
        try (MonitorService a = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-a").start()) {
            ServiceTestSupport.awaitTrue("an incident opened on each stream", WAIT, () -> opened(incidents(a)) == 2);
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            try (MonitorService b = new MonitorService(config, new SimpleMeterRegistry(), prefix + "-b").start()) {
                ServiceTestSupport.awaitTrue("each instance to own a partition and be ready", WAIT,
                        () -> a.ready() && b.ready() && a.status().partitions().size() == 1
                                && b.status().partitions().size() == 1);
                ServiceTestSupport.produce(KAFKA, input, back, true);
                ServiceTestSupport.awaitTrue("each incident resolved, one by each instance", WAIT,
                        () -> resolved(incidents(a)) == 1 && resolved(incidents(b)) == 1);
                ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
                ofB = incidents(b);
            }
            ServiceTestSupport.awaitTrue("the partition back with the first instance", WAIT,
                    () -> a.ready() && a.status().partitions().size() == 2);
            int before = incidents(a).size();
            ServiceTestSupport.produce(KAFKA, input, again, true);
            ServiceTestSupport.awaitTrue("the new rise seen on both streams", WAIT,
                    () -> incidents(a).size() >= before + 2);
            ServiceTestSupport.awaitCommitted(KAFKA, prefix + "-group", input, WAIT);
            assertNull(a.failure());
            ofA = incidents(a);
        }
        List<JsonNode> sent = new ArrayList<>(ofA);
        sent.addAll(ofB);
        assertEquals(1, ofB.stream().map(i -> i.path("id").asText()).distinct().count(), "one incident: " + ofB);
        assertEquals("resolved", ofB.get(ofB.size() - 1).path("change").asText(),
                "the second instance resolved the incident it took over: " + ofB);
        int handedOverAt = ofB.get(0).path("revision").asInt();

        Set<String> idAndRevision = new HashSet<>();
        Map<String, Integer> openings = new LinkedHashMap<>();
        Set<String> ended = new HashSet<>();
        for (JsonNode incident : Stream.concat(ofB.stream(), ofA.stream()).toList()) {
            String id = incident.path("id").asText();
            assertTrue(idAndRevision.add(id + "#" + incident.path("revision").asInt()),
                    "one message per id and revision: " + id + " revision " + incident.path("revision").asInt());
            if (incident.path("change").asText().equals("opened")) {
                openings.merge(id, 1, Integer::sum);
            }
            if (incident.path("change").asText().equals("resolved")) {
                ended.add(id);
            }
        }
        openings.forEach((id, n) -> assertEquals(1, n, "one opening of " + id));
        assertEquals(4, openings.size(), "an incident on each stream for each rise");
        for (JsonNode incident : ofA) {
            if (ofB.stream().anyMatch(i -> i.path("id").equals(incident.path("id")))) {
                assertTrue(incident.path("revision").asInt() < handedOverAt,
                        "nothing sent here about the incident once handed over: " + incident);
            }
        }
        assertEquals(2, ended.size(), "the first rise's two incidents resolved");

        // every message is one of a replay of all events, byte for byte
        Path events = dir.resolve("events.jsonl");
        List<String> lines = new ArrayList<>();
        Stream.of(rise, back, again).flatMap(List::stream).forEach(e -> lines.add(e.text()));
        Files.write(events, lines, StandardCharsets.UTF_8);
        ReplayRunner.run(config, new ReplayRequest(null, events, dir.resolve("out"), null, null, null, input, false));
        List<String> replayed = Files.readAllLines(dir.resolve("out").resolve(ReplayRunner.INCIDENTS)).stream()
                .map(line -> line.replace("--input " + events, "--topic " + input)).toList();
        for (JsonNode incident : sent) {
            assertTrue(replayed.contains(Json.write(incident)), "a message of the replay: " + Json.write(incident));
        }
    }

    /** Two regions whose records (keyed by region) land on the two partitions of the input topic. */
    private static String[] onBothPartitions() {
        String first = "north";
        for (String other : List.of("south", "east", "west", "centre")) {
            if (partition(other) != partition(first)) {
                return new String[] {first, other};
            }
        }
        throw new IllegalStateException("no region on the other partition");
    }

    /** The partition the producer's default partitioner picks for a key, of two. */
    private static int partition(String key) {
        return Utils.toPositive(Utils.murmur2(key.getBytes(StandardCharsets.UTF_8))) % 2;
    }

    /** The incident messages this instance sent, oldest first, as its live API gives them. */
    private static List<JsonNode> incidents(MonitorService service) {
        WebAnswer answer = service.site().answer("/api/alerts", "recent=200");
        List<JsonNode> out = new ArrayList<>();
        ServiceTestSupport.tree(answer.body()).path("incidents").path("recent").forEach(i -> out.add(0, i));
        return out;
    }

    private static long opened(List<JsonNode> incidents) {
        return incidents.stream().filter(i -> i.path("change").asText().equals("opened")).count();
    }

    private static long resolved(List<JsonNode> incidents) {
        return incidents.stream().filter(i -> i.path("change").asText().equals("resolved")).count();
    }
}
