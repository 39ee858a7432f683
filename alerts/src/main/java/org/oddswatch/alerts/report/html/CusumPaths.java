package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The CUSUM paths of one stream, one per chart (rule and subject), each with its limit h.
 *
 * <p>Where the window estimates carry CUSUM values (an optional {@code cusum} array per estimate,
 * entries with {@code rule}, {@code subject}, {@code value} and optionally {@code max} and
 * {@code limit}), the path is their value at each window end ({@code source: "estimates"}).
 * Otherwise the path is what the alerts give ({@code source: "alerts"}): a signal's excursion runs from
 * 0 at the alert's window start (the first event after the chart last stood at 0) to the statistic
 * at the signalling event, after which the chart restarts at 0; a cleared message gives the value at
 * that moment. Between these points the path is unknown and left as a gap.
 */
final class CusumPaths {

    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private CusumPaths() {
    }

    static ArrayNode of(List<WindowEstimate> windows, List<Alert> cusumAlerts) {
        Map<String, ObjectNode> paths = new LinkedHashMap<>();
        fromEstimates(windows, paths);
        Map<String, ObjectNode> fromAlerts = new LinkedHashMap<>();
        for (Alert a : cusumAlerts) {
            String subject = a.subject().label();
            String key = AlertPlacement.cusumChart(a.rule(), subject);
            if (paths.containsKey(key)) {
                continue;
            }
            ObjectNode path = fromAlerts.computeIfAbsent(key, k -> path(k, a.rule(), subject, "alerts"));
            if (a.limit() != null) {
                path.put("limit", Compact.round(a.limit()));
            }
            ArrayNode x = (ArrayNode) path.get("x");
            ArrayNode y = (ArrayNode) path.get("y");
            if (!x.isEmpty()) {
                x.add(a.windowStart().toEpochMilli());
                y.addNull();
            }
            if (a.state() != org.oddswatch.alerts.lifecycle.AlertState.CLEARED) {
                x.add(a.windowStart().toEpochMilli());
                y.add(0.0);
            }
            x.add(a.windowEnd().toEpochMilli());
            Compact.add(y, a.observed());
        }
        paths.putAll(fromAlerts);
        ArrayNode out = NODES.arrayNode();
        paths.values().forEach(out::add);
        return out;
    }

    private static ObjectNode path(String key, String rule, String subject, String source) {
        ObjectNode p = NODES.objectNode();
        p.put("key", key);
        p.put("rule", rule);
        p.put("subject", subject);
        p.put("source", source);
        p.putArray("x");
        p.putArray("y");
        return p;
    }

    /** Reads the optional {@code cusum} entries of the estimates. */
    private static void fromEstimates(List<WindowEstimate> windows, Map<String, ObjectNode> paths) {
        for (WindowEstimate e : windows) {
            JsonNode entries = Json.mapper().valueToTree(e).get("cusum");
            if (entries == null || !entries.isArray()) {
                continue;
            }
            for (JsonNode c : entries) {
                String rule = c.path("rule").asText(null);
                JsonNode value = c.has("value") ? c.get("value") : c.get("statistic");
                if (rule == null || value == null || !value.isNumber()) {
                    continue;
                }
                String subject = subjectLabel(c.get("subject"));
                String key = AlertPlacement.cusumChart(rule, subject);
                ObjectNode path = paths.computeIfAbsent(key, k -> path(k, rule, subject, "estimates"));
                if (c.path("limit").isNumber()) {
                    path.put("limit", Compact.round(c.get("limit").doubleValue()));
                }
                ((ArrayNode) path.get("x")).add(e.windowEnd().toEpochMilli());
                Compact.add((ArrayNode) path.get("y"), value.doubleValue());
                if (c.path("max").isNumber()) {
                    Compact.add(path.withArray("max"), c.get("max").doubleValue());
                }
            }
        }
    }

    private static String subjectLabel(JsonNode subject) {
        if (subject == null || subject.isNull()) {
            return "calibration";
        }
        if (subject.isTextual()) {
            return subject.textValue();
        }
        String term = subject.path("term").asText("calibration");
        return subject.hasNonNull("level") ? term + "=" + subject.get("level").asText() : term;
    }
}
