package org.oddswatch.ingest.output;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.Function;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.RejectedRecord;

/**
 * Where the pipeline's outputs leave it, the same for the live service and for a replay: each
 * estimate, alert and reject is assigned to its monitor, written as JSON once under that monitor's
 * small-cell rule ({@link PublishedEstimate}, {@link PublishedAlert}) and handed to the monitor's
 * sinks in order. Keys: an estimate {@code <stream>|<windowEnd>} (interim and final share it, so a
 * compacted topic keeps the final one); an alert its id; a reject the {@code <topic>/<partition>/<offset>}
 * of its record ({@code line/<n>} in a file). A reject also comes as a message that fits the
 * producer's default 1 MiB request: a value over {@value #REJECT_VALUE_LIMIT} bytes is cut at the
 * last whole UTF-8 character ({@code valueTruncated: true}, {@code valueBytes}: the original length),
 * a detail over {@value #REJECT_DETAIL_LIMIT} characters likewise. A reject no monitor claims goes to
 * the first monitor of its source topic. The stage does not close its sinks.
 *
 * <p>Each alert also goes to one {@link IncidentTracker} for all monitors, and each incident message
 * it gives goes to the sinks of its first stream's monitor (key: the incident id). Related streams:
 * a split stream and an unsplit monitor reading the same input topic (its parent). After a restart
 * the alerts read back ({@link #onAlertsRestored}) continue the incidents open before it; what was
 * published before and is still current (open episodes and incidents, recent final estimates) goes
 * to the sinks' {@code restored...} methods, never published again.
 */
public final class OutputStage implements PipelineListener {

    /** Most bytes of a rejected record's value copied into its reject message. */
    public static final int REJECT_VALUE_LIMIT = 32 * 1024;
    /** Most characters of a reject message's detail text. */
    public static final int REJECT_DETAIL_LIMIT = 2000;

    private final List<MonitorDefinition> monitors;
    private final Map<String, List<OutputSink>> sinks = new LinkedHashMap<>();
    private final IncidentTracker incidents;

    /** @param sinksOf the sinks of each monitor, in the order they receive an output */
    public OutputStage(List<MonitorDefinition> monitors, Function<MonitorDefinition, List<OutputSink>> sinksOf) {
        this.monitors = List.copyOf(monitors);
        for (MonitorDefinition monitor : monitors) {
            sinks.put(monitor.name(), List.copyOf(sinksOf.apply(monitor)));
        }
        this.incidents = new IncidentTracker(this::splitAndParent);
    }

    /** True when one stream is a split stream and the other an unsplit monitor on the same input topic. */
    private boolean splitAndParent(String a, String b) {
        MonitorDefinition ma = MonitorDefinition.ofStream(monitors, a);
        MonitorDefinition mb = MonitorDefinition.ofStream(monitors, b);
        return ma.topic().equals(mb.topic()) && (ma.split() == null) != (mb.split() == null);
    }

    /** The key of an estimate on the estimates topic. */
    public static String estimateKey(WindowEstimate estimate) {
        return estimate.stream() + "|" + estimate.windowEnd();
    }

    @Override
    public void onEstimate(WindowEstimate estimate) {
        MonitorDefinition monitor = MonitorDefinition.ofStream(monitors, estimate.stream());
        Published published = new Published(monitor.name(), estimateKey(estimate),
                PublishedEstimate.json(estimate, monitor.outputs().smallCells()));
        sinks.get(monitor.name()).forEach(sink -> sink.estimate(estimate, published));
    }

    @Override
    public void onAlert(Alert alert) {
        Published published = published(alert);
        sinks.get(published.monitor()).forEach(sink -> sink.alert(alert, published));
        incidents.accept(alert).ifPresent(incident -> toSinks(incident, false));
    }

    /** To the sinks of the incident's first stream's monitor (key: the incident id), published or restored. */
    private void toSinks(Incident incident, boolean restored) {
        MonitorDefinition first = MonitorDefinition.ofStream(monitors, incident.streams().get(0));
        Published message = new Published(first.name(), incident.id(), Json.write(incident));
        for (OutputSink sink : sinks.get(first.name())) {
            if (restored) {
                sink.restoredIncident(incident, message);
            } else {
                sink.incident(incident, message);
            }
        }
    }

    /**
     * After a restart or a hand-over: the incidents open before it go on, the read-back taken as the
     * truth where it is newer ({@link IncidentTracker#restoreLatest}), and the latest message of each
     * taken over, replaced or ended goes to the sinks' {@link OutputSink#restoredIncident}.
     */
    @Override
    public void onAlertsRestored(List<Alert> published) {
        incidents.restoreLatest(published).forEach(incident -> toSinks(incident, true));
    }

    /** After a restart: an open episode's latest message, written as published, to {@link OutputSink#restoredAlert}. */
    @Override
    public void onAlertRestored(Alert alert) {
        Published published = published(alert);
        sinks.get(published.monitor()).forEach(sink -> sink.restoredAlert(alert, published));
    }

    /** The alert as its monitor publishes it (key: its id). */
    private Published published(Alert alert) {
        MonitorDefinition monitor = MonitorDefinition.ofStream(monitors, alert.stream());
        return new Published(monitor.name(), alert.id(), PublishedAlert.json(alert, monitor.outputs().smallCells()));
    }

    /** After a restart: a final estimate read back, its text as read, to {@link OutputSink#restoredEstimate}. */
    @Override
    public void onEstimateRestored(WindowEstimate estimate, String publishedJson) {
        MonitorDefinition monitor = MonitorDefinition.ofStream(monitors, estimate.stream());
        Published published = new Published(monitor.name(), estimateKey(estimate), publishedJson);
        sinks.get(monitor.name()).forEach(sink -> sink.restoredEstimate(estimate, published));
    }

    /**
     * Streams that left this instance: the incident grouping forgets their episodes
     * ({@link IncidentTracker#release}) and every sink hears of it once ({@link OutputSink#released}).
     */
    @Override
    public void onStreamsReleased(List<String> streams) {
        incidents.release(streams);
        sinks.values().stream().flatMap(List::stream).distinct().forEach(sink -> sink.released(streams));
    }

    @Override
    public void onReject(RejectedRecord rejected) {
        MonitorDefinition monitor = monitorOf(rejected);
        RecordOrigin origin = rejected.origin();
        String key = origin.topic() == null ? "line/" + origin.lineNumber()
                : origin.topic() + "/" + origin.partition() + "/" + origin.offset();
        Published whole = new Published(monitor.name(), key, Json.write(rejected.toJson()));
        String message = messageJson(rejected, whole.json());
        sinks.get(monitor.name()).forEach(sink -> sink.reject(whole, message));
    }

    private MonitorDefinition monitorOf(RejectedRecord rejected) {
        return monitors.stream().filter(m -> m.name().equals(rejected.monitor())).findFirst()
                .or(() -> monitors.stream().filter(m -> m.topic().equals(rejected.origin().topic())).findFirst())
                .orElse(monitors.get(0));
    }

    /** The reject cut to fit one message, or {@code whole} when nothing is too long. */
    static String messageJson(RejectedRecord rejected, String whole) {
        byte[] value = rejected.value();
        String detail = rejected.detail();
        boolean longValue = value != null && value.length > REJECT_VALUE_LIMIT;
        boolean longDetail = detail != null && detail.length() > REJECT_DETAIL_LIMIT;
        if (!longValue && !longDetail) {
            return whole;
        }
        RejectedRecord bounded = new RejectedRecord(rejected.monitor(), rejected.stream(), rejected.outcome(),
                rejected.reason(), longDetail ? detail.substring(0, REJECT_DETAIL_LIMIT) + "..." : detail,
                rejected.origin(), longValue ? utf8Prefix(value, REJECT_VALUE_LIMIT) : value);
        ObjectNode json = Json.mapper().valueToTree(bounded.toJson());
        if (longValue) {
            json.put("valueTruncated", true);
            json.put("valueBytes", value.length);
        }
        return Json.write(json);
    }

    /** The first bytes of {@code value}, at most {@code limit}, not ending inside a UTF-8 sequence. */
    static byte[] utf8Prefix(byte[] value, int limit) {
        int cut = limit;
        // Step back over continuation bytes (10xxxxxx) to the lead byte, at most three of them.
        for (int i = 0; i < 3 && cut > 0 && (value[cut] & 0xC0) == 0x80; i++) {
            cut--;
        }
        return Arrays.copyOf(value, cut);
    }
}
