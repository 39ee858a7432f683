package org.oddswatch.ingest.definition;

import java.nio.file.Path;
import java.util.List;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.estimator.EstimatorOptions;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * One validated monitor of a definition file.
 *
 * @param name the monitor (and, without a split, stream) name
 * @param split the split section, or null for one stream
 * @param baseline the baseline section, or null
 * @param definitionDir directory of the definition file (relative baseline files resolve against it)
 * @param checksum SHA-256 (hex) of the model part (outcome and terms; {@link DefinitionChecksum}),
 *     stored in baselines so a baseline fitted under another model is recognised
 * @param notices what the definition means that an operator may not expect (a rule that runs
 *     because its section is not listed), one sentence each; shown by {@code check}
 */
public record MonitorDefinition(String name, String topic, EventSpec event, SplitSpec split, List<TermSpec> terms,
                                WindowSpec window, EstimateSpec estimates, BaselineSpec baseline,
                                AlertRulesConfig rules, OutputSpec outputs, Path definitionDir, String checksum,
                                List<String> notices) {

    public MonitorDefinition {
        terms = List.copyOf(terms);
        notices = notices == null ? List.of() : List.copyOf(notices);
    }

    /** This monitor without its baseline section (the baseline builder fits one instead of reading one). */
    public MonitorDefinition withoutBaseline() {
        return new MonitorDefinition(name, topic, event, split, terms, window, estimates, null, rules, outputs,
                definitionDir, checksum, notices);
    }

    /** A new design coder for this monitor's terms, in declaration order. */
    public DesignCoder designCoder() {
        return new DesignCoder(terms.stream().map(TermSpec::term).toList());
    }

    /** What a definition re-running this monitor's recorded rule inputs must share with it: model and window grid. */
    public String ruleInputsKey() {
        return "model " + checksum + ", window " + geometry();
    }

    public WindowGeometry geometry() {
        return new WindowGeometry(window.width().toMillis(), window.step().toMillis(), window.align().toEpochMilli(),
                window.lateness().toMillis());
    }

    public EstimatorOptions estimatorOptions() {
        EstimatorOptions options = EstimatorOptions.defaults().withLevel(estimates.level())
                .withPrevalenceInterval(estimates.prevalenceInterval()).withStratifyBy(estimates.stratifyBy())
                .withMinEventsPerParameter(estimates.minEventsPerParameter())
                .withProfileIntervals(estimates.profileIntervals());
        return estimates.sensitivity() == null ? options
                : options.withTestAccuracy(estimates.sensitivity(), estimates.specificity());
    }

    /** Index of the stratifying term among the terms, or -1. */
    public int stratumTermIndex() {
        String by = estimates.stratifyBy();
        return by == null ? -1 : terms.stream().map(TermSpec::name).toList().indexOf(by);
    }

    /** Levels of the stratifying term, 0 for none. */
    public int strata() {
        int t = stratumTermIndex();
        return t < 0 ? 0 : ((CategoricalTerm) terms.get(t).term()).levels().size();
    }

    /**
     * The alert engine of one of this monitor's streams: its rules on the window grid, message counts
     * under the small-cell rule, the false-alarm budget shared by up to {@code split.maxStreams} streams.
     */
    public AlertEngine alertEngine(String stream, BaselineModel baseline, ReplayHint hint) {
        return new AlertEngine(stream, rules, baseline, hint, geometry(), outputs.smallCells(),
                split == null ? 1 : split.maxStreams());
    }

    /** Event time a stream must keep: one window width plus the allowed lateness, in milliseconds. */
    public long retentionMillis() {
        return window.width().toMillis() + window.lateness().toMillis();
    }

    /** The stream name of a split value: {@code name/value}, or {@code name} without a split. */
    public String streamName(String splitValue) {
        return splitValue == null ? name : name + "/" + splitValue;
    }

    /** True when {@code stream} is this monitor's ({@code name} or {@code name/value}; names hold no '/'). */
    public boolean owns(String stream) {
        return stream.equals(name) || stream.startsWith(name + "/");
    }

    /** The monitor among {@code monitors} a stream ({@code name} or {@code name/value}) belongs to. */
    public static MonitorDefinition ofStream(List<MonitorDefinition> monitors, String stream) {
        return monitors.stream().filter(m -> m.owns(stream))
                .findFirst().orElseThrow(() -> new IllegalArgumentException("no monitor for stream " + stream));
    }
}
