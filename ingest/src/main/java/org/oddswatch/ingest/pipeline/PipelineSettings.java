package org.oddswatch.ingest.pipeline;

import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * How a pipeline runs besides the monitor definitions.
 *
 * @param limits record caps
 * @param replayHint how alerts phrase their replay command
 * @param baselines reader of frozen baseline files
 * @param fromMillis event-time filter start (inclusive), or null
 * @param toMillis event-time filter end (exclusive), or null; events outside are counted
 *     {@code rejected/outside-range} but not sent to rejects. (A replay range does not use this
 *     filter: {@code ReplayRunner} feeds every event and reports only the windows in its range,
 *     since windows depend on earlier and later events.)
 */
public record PipelineSettings(RecordLimits limits, ReplayHint replayHint, BaselineSource baselines, Long fromMillis,
                               Long toMillis) {

    public static PipelineSettings defaults() {
        return new PipelineSettings(RecordLimits.defaults(), new ReplayHint(null, null, null), BaselineSource.files(),
                null, null);
    }

    public PipelineSettings withLimits(RecordLimits value) {
        return new PipelineSettings(value, replayHint, baselines, fromMillis, toMillis);
    }

    public PipelineSettings withReplayHint(ReplayHint value) {
        return new PipelineSettings(limits, value, baselines, fromMillis, toMillis);
    }

    boolean inRange(long time) {
        return (fromMillis == null || time >= fromMillis) && (toMillis == null || time < toMillis);
    }
}
