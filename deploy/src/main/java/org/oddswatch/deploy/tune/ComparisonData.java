package org.oddswatch.deploy.tune;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import org.oddswatch.alerts.json.Json;

/**
 * The data of {@code comparison.html}: the settings' summaries, their alert messages counted by rule,
 * and per setting the episodes it raises, each marked {@code added} when the base replay's alerts
 * do not raise it, with the base replay's episodes the setting lacks marked {@code removed}. An
 * episode is matched by stream, rule, subject ({@code term} or {@code term=level}, with the measure in
 * brackets where the alert names one) and the end of the window its {@code raised} message is in.
 */
public final class ComparisonData {

    private ComparisonData() {
    }

    /**
     * @param baseAlerts the replay's alerts.jsonl
     * @param results the settings, in order
     * @param settingAlerts each setting's alerts.jsonl, in the order of {@code results}
     */
    public static ObjectNode build(Path baseAlerts, List<SettingResult> results, List<Path> settingAlerts,
                                   Instant after) throws IOException {
        ObjectNode data = Json.mapper().createObjectNode();
        data.put("after", after == null ? null : after.toString());
        ArrayNode settings = data.putArray("settings");
        Set<Raised> base = raised(read(baseAlerts));
        Map<String, int[]> counts = new TreeMap<>();
        ArrayNode episodes = data.putArray("episodes");
        for (int i = 0; i < results.size(); i++) {
            SettingResult r = results.get(i);
            ObjectNode s = settings.addObject().put("name", r.name())
                    .put("change", r.changes().isEmpty() ? r.definition() : r.changes().toString())
                    .put("messages", r.messages()).put("episodes", r.episodes());
            SettingResult.First f = r.firstRaised();
            if (f == null) {
                s.putNull("firstRaised");
            } else {
                s.putObject("firstRaised").put("stream", f.stream()).put("rule", f.rule())
                        .put("subject", subject(f.term(), f.level())).put("windowEnd", f.windowEnd().toString());
            }
            List<JsonNode> alerts = read(settingAlerts.get(i));
            for (JsonNode a : alerts) {
                counts.computeIfAbsent(a.get("rule").asText(), k -> new int[results.size()])[i]++;
            }
            Set<Raised> mine = raised(alerts);
            Set<Raised> listed = new TreeSet<>(mine);
            listed.addAll(base);
            ArrayNode list = episodes.addArray();
            for (Raised e : listed) {
                boolean inMine = mine.contains(e);
                boolean inBase = base.contains(e);
                list.addObject().put("stream", e.stream()).put("rule", e.rule()).put("subject", e.subject())
                        .put("windowEnd", e.windowEnd()).put("mark", inMine && inBase ? "" : inMine ? "added" : "removed");
            }
        }
        ArrayNode rules = data.putArray("rules");
        ObjectNode byRule = data.putObject("counts");
        counts.forEach((rule, n) -> {
            rules.add(rule);
            ArrayNode a = byRule.putArray(rule);
            for (int c : n) {
                a.add(c);
            }
        });
        return data;
    }

    /** An episode's raising message: where and when. */
    private record Raised(String stream, String rule, String subject, String windowEnd) implements Comparable<Raised> {
        @Override
        public int compareTo(Raised o) {
            int c = windowEnd.compareTo(o.windowEnd);
            c = c != 0 ? c : stream.compareTo(o.stream);
            c = c != 0 ? c : rule.compareTo(o.rule);
            return c != 0 ? c : subject.compareTo(o.subject);
        }
    }

    private static Set<Raised> raised(List<JsonNode> alerts) {
        Set<Raised> out = new LinkedHashSet<>();
        for (JsonNode a : alerts) {
            if ("raised".equals(a.get("state").asText())) {
                JsonNode s = a.get("subject");
                out.add(new Raised(a.get("stream").asText(), a.get("rule").asText(),
                        subject(s.path("term").asText(null), s.path("level").asText(null))
                                + (a.hasNonNull("measure") ? " (" + a.get("measure").asText() + ")" : ""),
                        a.get("windowEnd").asText()));
            }
        }
        return out;
    }

    private static String subject(String term, String level) {
        return (term == null ? "" : term) + (level == null ? "" : "=" + level);
    }

    private static List<JsonNode> read(Path file) throws IOException {
        List<JsonNode> out = new ArrayList<>();
        for (String line : Files.readAllLines(file, StandardCharsets.UTF_8)) {
            if (!line.isBlank()) {
                out.add(Json.mapper().readTree(line));
            }
        }
        return out;
    }
}
