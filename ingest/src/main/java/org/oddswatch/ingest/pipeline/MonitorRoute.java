package org.oddswatch.ingest.pipeline;

import java.util.LinkedHashMap;
import java.util.Map;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.ingest.decode.EventDecoder;
import org.oddswatch.ingest.definition.MonitorDefinition;

/** One monitor of a pipeline: its decoder, estimator, frozen baseline shared by its streams, and streams. */
final class MonitorRoute {

    final MonitorDefinition monitor;
    final EventDecoder decoder;
    final WindowEstimator estimator;
    /** The baseline file every stream of the monitor uses (a file name without {@code {split}}), else null. */
    final BaselineModel sharedBaseline;
    /** Streams by split value (null without a split), in creation order. */
    final Map<String, StreamState> streams = new LinkedHashMap<>();
    /** Outcomes of records this monitor rejected before they reached a stream. */
    final OutcomeCounts unrouted = new OutcomeCounts();

    MonitorRoute(MonitorDefinition monitor, BaselineModel sharedBaseline) {
        this.monitor = monitor;
        this.decoder = new EventDecoder(monitor);
        this.estimator = new WindowEstimator(decoder.coder(), monitor.estimatorOptions());
        this.sharedBaseline = sharedBaseline;
    }
}
