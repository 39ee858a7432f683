package org.oddswatch.ingest.pipeline;

import java.io.IOException;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.window.WindowStore;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.definition.BaselineSpec;
import org.oddswatch.ingest.definition.MonitorDefinition;

/** One monitor of a pipeline: its decoder, estimator, streams, and the baseline file all its streams share. */
final class MonitorRoute {

    final MonitorDefinition monitor;
    final EventDecoder decoder;
    final WindowEstimator estimator;
    /** Streams by split value (null without a split), in creation order. */
    final Map<String, StreamState> streams = new LinkedHashMap<>();
    /** Outcomes of records this monitor rejected before they reached a stream. */
    final OutcomeCounts unrouted = new OutcomeCounts();
    /** The baseline file of every stream (a file name without {@code {split}}), else null. */
    final BaselineModel sharedBaseline;

    /** @throws IllegalArgumentException when the baseline file shared by every stream cannot be read */
    MonitorRoute(MonitorDefinition monitor) {
        this.monitor = monitor;
        this.decoder = new EventDecoder(monitor);
        this.estimator = new WindowEstimator(decoder.coder(), monitor.estimatorOptions());
        BaselineSpec spec = monitor.baseline();
        if (spec == null || spec.isFixedPeriod() || spec.file().contains("{split}")) {
            this.sharedBaseline = null;
            return;
        }
        Path file = spec.fileFor(monitor.definitionDir(), null);
        try {
            this.sharedBaseline = readBaseline(file);
        } catch (IOException | RuntimeException e) {
            throw new IllegalArgumentException("monitor " + monitor.name() + ": cannot read baseline file " + file
                    + ": " + e.getMessage(), e);
        }
    }

    WindowStore newStore() {
        return new WindowStore(decoder.coder(), monitor.estimates().patternLimit(), monitor.strata());
    }

    /** A baseline file ({@link BaselineFile}), checked against the design columns and the definition's checksum. */
    BaselineModel readBaseline(Path file) throws IOException {
        BaselineModel model = BaselineFile.read(file, monitor.designCoder().columns());
        if (!BaselineFile.checksumMatches(model, monitor.checksum())) {
            throw new IOException("it was fitted under another definition of the outcome or terms (checksum "
                    + model.definitionChecksum() + ", this definition " + monitor.checksum() + ")");
        }
        return model;
    }
}
