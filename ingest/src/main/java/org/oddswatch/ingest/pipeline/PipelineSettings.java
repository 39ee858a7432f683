package org.oddswatch.ingest.pipeline;

import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.engine.RuleInputs;
import org.oddswatch.ingest.definition.RecordLimits;

/**
 * How a pipeline runs besides the monitor definitions.
 *
 * @param limits record caps
 * @param replayHint how alerts phrase their replay command
 * @param ruleInputs where the alert engines' calls are recorded (a replay's rule-input file), or null
 */
public record PipelineSettings(RecordLimits limits, ReplayHint replayHint, RuleInputs ruleInputs) {

    public static PipelineSettings defaults() {
        return new PipelineSettings(RecordLimits.defaults(), new ReplayHint(null, null, null), null);
    }

    public PipelineSettings withLimits(RecordLimits value) {
        return new PipelineSettings(value, replayHint, ruleInputs);
    }

    public PipelineSettings withReplayHint(ReplayHint value) {
        return new PipelineSettings(limits, value, ruleInputs);
    }

    public PipelineSettings withRuleInputs(RuleInputs value) {
        return new PipelineSettings(limits, replayHint, value);
    }
}
