package org.oddswatch.alerts.live;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.databind.util.RawValue;
import java.net.URLDecoder;
import java.nio.charset.StandardCharsets;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.function.Supplier;
import org.oddswatch.alerts.json.Json;

/**
 * The live page's read-only JSON API, answered from the service's status snapshot and the
 * {@link LiveHistory} (published JSON only: small cells already withheld, no record values, no event
 * payloads). Paths (every answer bounded; the caps are constants here and in the README):
 * <ul>
 *   <li>{@code /api/streams}: the service (state, reason, record counts by outcome and reason, every
 *       partition with its readiness and rebuild progress) and, per stream (at most {@value #STREAMS},
 *       sorted by name; {@code rebuilt}: records of the partition re-read so far to rebuild state), its status (watermark, baseline state and note, counts, gaps), the count of
 *       its open alerts, its newest final estimate ({@code final}) and the interim estimate of its
 *       open window ({@code open});</li>
 *   <li>{@code /api/streams/{stream}/estimates?last=N}: the stream's last N final estimates, oldest
 *       first (N from 1 to {@value LiveHistory#WINDOWS}, default {@value #DEFAULT_LAST}), and its open
 *       window; a stream neither in the status nor in the history answers 404;</li>
 *   <li>{@code /api/alerts?recent=N}: the open episodes' newest messages ({@code open}, at most
 *       {@value LiveHistory#OPEN_ALERTS}) and the last N messages ({@code recent}, newest first; N from 0
 *       to {@value LiveHistory#RECENT_ALERTS}, default {@value #DEFAULT_RECENT}); and under
 *       {@code incidents} the same for incidents: the open incidents' newest messages ({@code open},
 *       at most {@value LiveHistory#OPEN_INCIDENTS}) and the last N incident messages ({@code recent},
 *       newest first, the same N).</li>
 * </ul>
 * A stream name in a path is URL-encoded (a {@code /} in it may be written as {@code %2F} or as is).
 */
public final class LiveApi {

    /** Path prefix of the API. */
    public static final String PREFIX = "/api/";
    /** Most streams in {@code /api/streams}. */
    public static final int STREAMS = LiveHistory.STREAMS;
    /** Final windows given when {@code last} is not set. */
    public static final int DEFAULT_LAST = 60;
    /** Alert messages given when {@code recent} is not set. */
    public static final int DEFAULT_RECENT = 50;
    private static final String ESTIMATES = "/estimates";
    private static final String STREAMS_PATH = "/api/streams";
    /** Per-stream status fields the API passes on (the rest of {@code /status} stays there). */
    private static final List<String> STREAM_FIELDS = List.of("monitor", "watermark", "lastFinalWindowEnd",
            "finalWindows", "baseline", "baselineNote", "heldFuture", "counts", "gaps");

    private final LiveHistory history;
    private final Supplier<?> status;

    /**
     * @param history what the service published
     * @param status the service's status snapshot (rendered as {@code /status} renders it)
     */
    public LiveApi(LiveHistory history, Supplier<?> status) {
        this.history = history;
        this.status = status;
    }

    /**
     * The answer to a GET of {@code rawPath} (not decoded) with {@code rawQuery} (or null), or null when
     * the path is not the API's.
     */
    public WebAnswer answer(String rawPath, String rawQuery) {
        if (!rawPath.startsWith(PREFIX)) {
            return null;
        }
        Map<String, String> query = query(rawQuery);
        try {
            if (rawPath.equals(STREAMS_PATH)) {
                return WebAnswer.json(200, streams());
            }
            if (rawPath.equals("/api/alerts")) {
                return WebAnswer.json(200, alerts(bounded(query, "recent", DEFAULT_RECENT, 0, LiveHistory.RECENT_ALERTS)));
            }
            if (rawPath.startsWith(STREAMS_PATH + "/") && rawPath.endsWith(ESTIMATES)
                    && rawPath.length() > STREAMS_PATH.length() + 1 + ESTIMATES.length()) {
                String stream = URLDecoder.decode(rawPath.substring(STREAMS_PATH.length() + 1,
                        rawPath.length() - ESTIMATES.length()), StandardCharsets.UTF_8);
                return estimates(stream, bounded(query, "last", DEFAULT_LAST, 1, LiveHistory.WINDOWS));
            }
        } catch (IllegalArgumentException e) {
            return WebAnswer.error(400, e.getMessage());
        }
        return WebAnswer.error(404, "not found: " + rawPath);
    }

    /** The body of {@code /api/streams}. */
    String streams() {
        JsonNode snapshot = Json.mapper().valueToTree(status.get());
        ObjectNode root = JsonNodeFactory.instance.objectNode();
        ObjectNode service = root.putObject("service");
        for (String field : List.of("state", "reason", "counts")) {
            service.set(field, snapshot.get(field));
        }
        Map<String, Long> rebuilt = new HashMap<>();
        snapshot.path("inputs").forEach(i -> rebuilt.put(i.path("input").asText(), i.path("rebuilt").asLong()));
        ArrayNode partitions = service.putArray("partitions");
        for (JsonNode p : snapshot.path("partitions")) {
            ObjectNode row = partitions.addObject();
            row.setAll((ObjectNode) p);
            // A partition's pipeline is named topic-partition, as Kafka's TopicPartition prints it.
            row.put("rebuilt", rebuilt.getOrDefault(p.path("topic").asText() + "-" + p.path("partition").asInt(), 0L));
        }
        ArrayNode inputs = service.putArray("inputs");
        Map<String, ObjectNode> byStream = new TreeMap<>();
        for (JsonNode input : snapshot.path("inputs")) {
            inputs.addObject().put("input", input.path("input").asText())
                    .put("rebuilt", input.path("rebuilt").asLong())
                    .set("totals", input.path("totals"));
            for (JsonNode s : input.path("streams")) {
                ObjectNode row = JsonNodeFactory.instance.objectNode();
                row.put("stream", s.path("stream").asText());
                STREAM_FIELDS.forEach(f -> row.set(f, s.get(f)));
                byStream.putIfAbsent(s.path("stream").asText(), row);
            }
        }
        for (String name : history.streams()) {
            byStream.computeIfAbsent(name, n -> JsonNodeFactory.instance.objectNode().put("stream", n)
                    .put("monitor", history.monitor(n)));
        }
        Map<String, Integer> openByStream = new HashMap<>();
        history.openAlerts().forEach(a -> openByStream.merge(a.stream(), 1, Integer::sum));
        ArrayNode list = root.putArray("streams");
        int listed = 0;
        for (Map.Entry<String, ObjectNode> e : byStream.entrySet()) {
            if (listed++ == STREAMS) {
                break;
            }
            ObjectNode row = e.getValue();
            row.put("openAlerts", openByStream.getOrDefault(e.getKey(), 0));
            raw(row, "final", history.newestFinal(e.getKey()));
            raw(row, "open", history.open(e.getKey()));
            list.add(row);
        }
        root.put("truncated", byStream.size() > STREAMS);
        root.set("limits", limits());
        return Json.write(root);
    }

    /** The answer of {@code /api/streams/{stream}/estimates}. */
    WebAnswer estimates(String stream, int last) {
        if (!history.has(stream) && !inStatus(stream)) {
            return WebAnswer.error(404, "no such stream: " + stream);
        }
        ObjectNode root = JsonNodeFactory.instance.objectNode();
        root.put("stream", stream).put("last", last);
        ArrayNode list = root.putArray("estimates");
        history.finals(stream, last).forEach(k -> list.addRawValue(new RawValue(k.json())));
        raw(root, "open", history.open(stream));
        return WebAnswer.json(200, Json.write(root));
    }

    /** The body of {@code /api/alerts}. */
    String alerts(int recent) {
        ObjectNode root = JsonNodeFactory.instance.objectNode();
        ArrayNode open = root.putArray("open");
        history.openAlerts().forEach(k -> open.addRawValue(new RawValue(k.json())));
        ArrayNode last = root.putArray("recent");
        history.recentAlerts(recent).forEach(k -> last.addRawValue(new RawValue(k.json())));
        ObjectNode incidents = root.putObject("incidents");
        ArrayNode openIncidents = incidents.putArray("open");
        history.openIncidents().forEach(k -> openIncidents.addRawValue(new RawValue(k.json())));
        ArrayNode lastIncidents = incidents.putArray("recent");
        history.recentIncidents(recent).forEach(k -> lastIncidents.addRawValue(new RawValue(k.json())));
        root.set("limits", limits());
        return Json.write(root);
    }

    private boolean inStatus(String stream) {
        for (JsonNode input : Json.mapper().valueToTree(status.get()).path("inputs")) {
            for (JsonNode s : input.path("streams")) {
                if (stream.equals(s.path("stream").asText())) {
                    return true;
                }
            }
        }
        return false;
    }

    private static ObjectNode limits() {
        return JsonNodeFactory.instance.objectNode().put("streams", STREAMS).put("windows", LiveHistory.WINDOWS)
                .put("openAlerts", LiveHistory.OPEN_ALERTS).put("recentAlerts", LiveHistory.RECENT_ALERTS)
                .put("openIncidents", LiveHistory.OPEN_INCIDENTS).put("recentIncidents", LiveHistory.RECENT_INCIDENTS);
    }

    private static void raw(ObjectNode node, String field, LiveHistory.Kept kept) {
        if (kept == null) {
            node.putNull(field);
        } else {
            node.putRawValue(field, new RawValue(kept.json()));
        }
    }

    private static int bounded(Map<String, String> query, String name, int fallback, int min, int max) {
        String value = query.get(name);
        if (value == null) {
            return fallback;
        }
        int n;
        try {
            n = Integer.parseInt(value);
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(name + " must be a whole number from " + min + " to " + max);
        }
        if (n < min || n > max) {
            throw new IllegalArgumentException(name + " must be from " + min + " to " + max + ", got " + n);
        }
        return n;
    }

    private static Map<String, String> query(String rawQuery) {
        Map<String, String> out = new HashMap<>();
        if (rawQuery == null || rawQuery.isEmpty()) {
            return out;
        }
        for (String pair : rawQuery.split("&")) {
            int eq = pair.indexOf('=');
            String key = URLDecoder.decode(eq < 0 ? pair : pair.substring(0, eq), StandardCharsets.UTF_8);
            out.putIfAbsent(key, eq < 0 ? "" : URLDecoder.decode(pair.substring(eq + 1), StandardCharsets.UTF_8));
        }
        return out;
    }
}
