package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.TreeSet;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The data island of {@code report.html}: one object with the title, the caution, the small-cell
 * limit, the chart library, the alerts (table rows, each naming the chart its marker is on) and per
 * stream the series of {@link StreamSeries}, the CUSUM paths of {@link CusumPaths}, the rejects of
 * {@link RejectBuckets}, alert markers, the baseline values and limits the alerts carry, and the
 * limits of the stream's rule settings ({@link RuleLines}).
 * Deterministic: the same inputs give the same tree.
 */
final class ReportData {

    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private ReportData() {
    }

    static ObjectNode build(List<WindowEstimate> estimates, List<Alert> alerts, String title, ReportOptions options) {
        SmallCellPolicy cells = options.cells();
        List<RejectMark> rejects = options.rejects();
        Map<String, List<WindowEstimate>> byStream = new TreeMap<>();
        estimates.stream().filter(e -> e.status() == WindowStatus.FINAL)
                .sorted(Comparator.comparing(WindowEstimate::stream).thenComparing(WindowEstimate::windowEnd))
                .forEach(e -> byStream.computeIfAbsent(e.stream(), k -> new ArrayList<>()).add(e));
        List<Alert> sorted = alerts.stream()
                .sorted(Comparator.comparing(Alert::stream).thenComparing(Alert::windowEnd).thenComparing(Alert::rule)
                        .thenComparing(a -> a.subject().label()).thenComparing(a -> a.state().ordinal()))
                .toList();
        sorted.forEach(a -> byStream.putIfAbsent(a.stream(), new ArrayList<>()));

        ObjectNode root = NODES.objectNode();
        root.put("title", title == null || title.isBlank() ? "oddswatch replay" : title);
        root.put("caution", AlertText.CAUTION);
        root.put("withholdBelow", cells.limit());
        root.put("library", "Chart.js " + ChartLibrary.VERSION);
        ArrayNode alertRows = root.putArray("alerts");
        ArrayNode streams = root.putArray("streams");
        Map<String, Long> unrouted = new TreeMap<>();
        Map<String, List<RejectMark>> rejectsByStream = new LinkedHashMap<>();
        for (RejectMark r : rejects) {
            if (r.stream() == null || !byStream.containsKey(r.stream())) {
                unrouted.merge(r.reason() == null ? "unknown" : r.reason(), 1L, Long::sum);
            } else {
                rejectsByStream.computeIfAbsent(r.stream(), k -> new ArrayList<>()).add(r);
            }
        }
        unrouted.forEach(root.putObject("otherRejects")::put);
        for (Map.Entry<String, List<WindowEstimate>> entry : byStream.entrySet()) {
            String name = entry.getKey();
            List<WindowEstimate> windows = entry.getValue();
            List<Alert> own = sorted.stream().filter(a -> a.stream().equals(name)).toList();
            ObjectNode stream = StreamSeries.of(windows, cells);
            stream.put("name", name);
            long[] ends = windows.stream().mapToLong(e -> e.windowEnd().toEpochMilli()).toArray();
            stream.set("rejects", RejectBuckets.of(ends, rejectsByStream.getOrDefault(name, List.of())));
            stream.set("cusum", CusumPaths.of(windows, own.stream().filter(a -> a.rule().contains("cusum")).toList()));
            markers(stream, windows, own, alertRows, streams.size(), options.rulesOfStream().apply(name));
            streams.add(stream);
        }
        return root;
    }

    /** Alert rows, chart markers, and the baseline values and limits the alerts carry, per chart. */
    private static void markers(ObjectNode stream, List<WindowEstimate> windows, List<Alert> own, ArrayNode rows,
                                int streamIndex, AlertRulesConfig rules) {
        Map<Instant, WindowEstimate> byEnd = new LinkedHashMap<>();
        windows.forEach(w -> byEnd.put(w.windowEnd(), w));
        ArrayNode markers = stream.putArray("markers");
        Map<String, TreeSet<Double>> limits = new TreeMap<>();
        Map<String, Double> baselines = new TreeMap<>();
        for (Alert a : own) {
            WindowEstimate window = byEnd.get(a.windowEnd());
            AlertPlacement place = AlertPlacement.of(a, window);
            ObjectNode row = rows.addObject();
            row.put("stream", streamIndex);
            row.put("id", a.id());
            row.put("rule", a.rule());
            row.put("subject", a.subject().label());
            row.put("state", a.state().toString());
            row.put("measure", place.measure());
            row.put("chart", place.chart());
            putNumber(row, "value", a.value() != null ? a.value() : a.observed());
            putNumber(row, "observed", a.observed());
            putNumber(row, "baseline", a.baseline());
            putNumber(row, "limit", a.limit());
            row.put("start", a.windowStart().toString());
            row.put("end", a.windowEnd().toString());
            row.put("command", a.replayCommand());
            ObjectNode m = markers.addObject();
            m.put("chart", place.chart());
            m.put("state", a.state().toString());
            m.put("x", a.windowEnd().toEpochMilli());
            putNumber(m, "y", markerValue(a, place, window));
            m.put("row", rows.size() - 1);
            recordReferenceLines(a, place, limits, baselines);
        }
        ObjectNode lines = stream.putObject("lines");
        RuleLines.add(rules, keys(stream.get("terms")), keys(stream.get("cusum")), limits, lines);
        limits.forEach((chart, values) -> {
            ArrayNode l = RuleLines.node(lines, chart).putArray("limits");
            values.forEach(v -> Compact.add(l, v));
        });
        baselines.forEach((chart, value) -> RuleLines.node(lines, chart).put("baseline", Compact.round(value)));
    }

    /**
     * Limits drawn as lines: the odds-ratio bounds, calibration bands and CUSUM limits the alerts
     * crossed or came back inside; the baseline odds ratio of the drift rule. The drift rule's limit is
     * on |z|, not on the odds ratio, so it is not drawn; nor is a Hosmer–Lemeshow p limit.
     */
    private static void recordReferenceLines(Alert a, AlertPlacement place, Map<String, TreeSet<Double>> limits,
                                             Map<String, Double> baselines) {
        boolean drift = "odds-ratio-drift".equals(a.rule());
        boolean pValue = AlertPlacement.isPValue(place.measure());
        if (a.limit() != null && !drift && !pValue && !place.chart().startsWith("cusum:")) {
            limits.computeIfAbsent(place.chart(), k -> new TreeSet<>()).add(Compact.round(a.limit()));
        }
        if (drift && a.baseline() != null) {
            baselines.put(place.chart(), a.baseline());
        }
    }

    private static List<String> keys(JsonNode charts) {
        List<String> keys = new ArrayList<>();
        charts.forEach(c -> keys.add(c.get("key").asText()));
        return keys;
    }

    /** Where the marker sits: the alert's observed value, or the window's O/E for a p-value alert. */
    private static Double markerValue(Alert a, AlertPlacement place, WindowEstimate window) {
        if (a.withheld() != null) {
            return null; // the alert's figures are withheld, and so is the window's calibration it would be drawn at
        }
        if (AlertPlacement.isPValue(place.measure())) {
            return window == null || window.calibration() == null ? 1.0 : window.calibration().observedExpected();
        }
        return a.observed();
    }

    private static void putNumber(ObjectNode node, String field, Double value) {
        Double rounded = Compact.round(value);
        if (rounded != null) {
            node.put(field, rounded);
        }
    }
}
