package org.oddswatch.ingest.pipeline;

import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * How a pipeline runs besides the monitor definitions.
 *
 * @param limits record caps
 * @param replayHint how alerts phrase their replay command
 */
public record PipelineSettings(RecordLimits limits, ReplayHint replayHint) {

    public static PipelineSettings defaults() {
        return new PipelineSettings(RecordLimits.defaults(), new ReplayHint(null, null, null));
    }

    public PipelineSettings withLimits(RecordLimits value) {
        return new PipelineSettings(value, replayHint);
    }

    public PipelineSettings withReplayHint(ReplayHint value) {
        return new PipelineSettings(limits, value);
    }
}
