package org.oddswatch.ingest.baseline;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.DecodedEvent;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.decode.RecordParser;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.replay.EventFileReader;
import org.oddswatch.ingest.replay.InputFormat;
import org.oddswatch.ingest.replay.RecordSink;

/**
 * Fits and freezes baseline models from an event file: every event of {@code [from, to)} that the
 * monitor accepts (same decoder as the pipeline; repeated ids within a stream counted once) goes into
 * one window per stream (or per monitor when pooled), which {@link WindowEstimator#fitBaseline} fits.
 * Files are named {@code <monitor>.json} (no split, or pooled) or {@code <monitor>-<split value>.json},
 * matching a definition's {@code baseline.file: baselines/<monitor>-{split}.json}.
 */
public final class BaselineBuilder {

    private BaselineBuilder() {
    }

    /** One monitor's decoder and its per-stream accumulation. */
    private static final class Accumulator {
        final MonitorDefinition monitor;
        final EventDecoder decoder;
        final Map<String, WindowStore> stores = new LinkedHashMap<>();
        final Map<String, Long> events = new LinkedHashMap<>();
        final Map<String, Set<String>> ids = new LinkedHashMap<>();

        Accumulator(MonitorDefinition monitor) {
            this.monitor = monitor;
            this.decoder = new EventDecoder(monitor);
        }
    }

    /**
     * @throws IllegalArgumentException when the named monitor does not exist
     * @throws IOException when the events cannot be read or a file cannot be written
     */
    public static List<BuiltBaseline> build(MonitorConfig config, BaselineRequest request) throws IOException {
        List<Accumulator> accumulators = new ArrayList<>();
        for (MonitorDefinition monitor : config.monitors()) {
            if (request.monitor() == null || request.monitor().equals(monitor.name())) {
                accumulators.add(new Accumulator(monitor));
            }
        }
        if (accumulators.isEmpty()) {
            throw new IllegalArgumentException("no monitor named '" + request.monitor() + "' in " + config.file());
        }
        if (!Files.isRegularFile(request.events())) {
            throw new IOException("events file " + request.events() + " does not exist");
        }
        RecordParser parser = new RecordParser(config.limits());
        long from = request.from().toEpochMilli();
        long to = request.to().toEpochMilli();
        RecordSink sink = new RecordSink() {
            @Override
            public void json(byte[] value, long line) {
                RecordParser.Parsed parsed = parser.parse(value);
                if (parsed.ok()) {
                    tree(parsed.tree());
                }
            }

            @Override
            public void tree(ObjectNode row, byte[] original, long line) {
                tree(row);
            }

            private void tree(JsonNode tree) {
                for (Accumulator accumulator : accumulators) {
                    add(accumulator, tree, from, to, request.pooled());
                }
            }

            @Override
            public void unreadable(byte[] original, long line, String reason, String detail) {
                // not an event: nothing to fit
            }
        };
        EventFileReader.read(request.events(), request.format() == null ? InputFormat.of(request.events())
                : request.format(), sink);
        Files.createDirectories(request.outDir());
        List<BuiltBaseline> built = new ArrayList<>();
        for (Accumulator accumulator : accumulators) {
            fit(accumulator, request, built);
        }
        return built;
    }

    private static void add(Accumulator accumulator, JsonNode tree, long from, long to, boolean pooled) {
        EventDecoder.Result result = accumulator.decoder.decode(tree);
        if (!result.ok()) {
            return;
        }
        DecodedEvent event = result.event();
        if (event.timeMillis() < from || event.timeMillis() >= to) {
            return;
        }
        String key = pooled || event.splitValue() == null ? null : event.splitValue();
        String stream = accumulator.monitor.streamName(key);
        Set<String> seen = accumulator.ids.computeIfAbsent(stream, s -> new HashSet<>());
        String identity = event.splitValue() == null ? event.id() : event.splitValue() + "\u0000" + event.id();
        if (!seen.add(identity)) {
            return;
        }
        MonitorDefinition monitor = accumulator.monitor;
        accumulator.stores.computeIfAbsent(stream, s -> new WindowStore(accumulator.decoder.coder(),
                monitor.estimates().patternLimit(), monitor.strata()))
                .add(0, event.row(), event.positive(), event.stratum());
        accumulator.events.merge(stream, 1L, Long::sum);
    }

    private static void fit(Accumulator accumulator, BaselineRequest request, List<BuiltBaseline> built) {
        MonitorDefinition monitor = accumulator.monitor;
        WindowEstimator estimator = new WindowEstimator(accumulator.decoder.coder(), monitor.estimatorOptions());
        if (accumulator.stores.isEmpty()) {
            built.add(new BuiltBaseline(monitor.name(), monitor.name(), null, 0, null,
                    "no accepted events between " + request.from() + " and " + request.to()));
            return;
        }
        for (Map.Entry<String, WindowStore> entry : accumulator.stores.entrySet()) {
            String stream = entry.getKey();
            long events = accumulator.events.get(stream);
            try {
                BaselineModel model = estimator.fitBaseline(entry.getValue().window(0, 1), request.from().toString(),
                        request.to().toString(), monitor.checksum());
                Path file = request.outDir().resolve(fileName(stream));
                BaselineFile.write(file, model);
                built.add(new BuiltBaseline(monitor.name(), stream, file, events, model, null));
            } catch (IllegalArgumentException e) {
                built.add(new BuiltBaseline(monitor.name(), stream, null, events, null, e.getMessage()));
            }
        }
    }

    /** {@code north} -> {@code north.json}; {@code north/east} -> {@code north-east.json}. */
    static String fileName(String stream) {
        return BaselineSpec.fileSafe(stream) + ".json";
    }
}
