package org.oddswatch.alerts.engine;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.rules.CalibrationRule;
import org.oddswatch.alerts.rules.InformationGuard;
import org.oddswatch.alerts.rules.Reading;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * What one stream's rules do not monitor: the rules that are off, and the final windows each running
 * rule did not judge, counted by rule and reason in first-seen order with the newest reason in words.
 */
final class RuleGaps {

    /** Windows one rule did not judge for one reason: how many, the newest one's end and reason in words. */
    private static final class Unjudged {
        long windows;
        Instant lastWindowEnd;
        String detail;
    }

    private final String stream;
    private final AlertRulesConfig rules;
    private final Map<List<Object>, Unjudged> unjudged = new LinkedHashMap<>();
    /** The guard of each window rule, by rule name, to tell why a window was not judged. */
    private final Map<String, InformationGuard> guards = new LinkedHashMap<>();

    RuleGaps(String stream, AlertRulesConfig rules) {
        this.stream = stream;
        this.rules = rules;
    }

    /** A window rule's guard, registered by the rule's name so its refusals can be told apart. */
    InformationGuard guard(String rule, AlertRulesConfig.Guard settings) {
        InformationGuard guard = new InformationGuard(settings);
        guards.put(rule, guard);
        return guard;
    }

    /**
     * Counts a window that {@code rule} read as unknown, with the code of its guard's refusal, else
     * {@link GapReason#NO_ESTIMATE} (a figure the rule reads is missing).
     */
    void unknown(String rule, WindowEstimate estimate, Reading reading) {
        GapReason reason;
        if (CalibrationRule.NAME.equals(rule) && estimate.calibration() == null) {
            reason = estimate.fit() == null ? GapReason.NO_FIT : GapReason.NO_ESTIMATE;
        } else {
            InformationGuard guard = guards.get(rule);
            GapReason refusal = guard == null ? null : guard.refusalReason(estimate.fit(), reading.events());
            reason = refusal == null ? GapReason.NO_ESTIMATE : refusal;
        }
        unjudged(rule, reason, estimate.windowEnd(), reading.detail());
    }

    /**
     * Counts a window once per rule and reason (a rule with several subjects reads it several
     * times); a null rule stands for every rule.
     */
    void unjudged(String rule, GapReason reason, Instant windowEnd, String detail) {
        Unjudged u = unjudged.computeIfAbsent(Arrays.asList(rule, reason), k -> new Unjudged());
        if (!windowEnd.equals(u.lastWindowEnd)) {
            u.windows++;
            u.lastWindowEnd = windowEnd;
        }
        u.detail = detail;
    }

    /** See {@link AlertEngine#gaps}; {@code hasBaseline} tells whether rules needing a baseline can run. */
    List<MonitoringGap> list(boolean hasBaseline, GapReason noBaseline, String noBaselineDetail) {
        List<MonitoringGap> gaps = new ArrayList<>();
        for (AlertRulesConfig.RuleSwitch rule : rules.switches()) {
            if (!rule.on()) {
                gaps.add(MonitoringGap.rule(stream, rule.rule(), rule.offReason(), rule.offDetail()));
            } else if (rule.needsBaseline() && !hasBaseline) {
                gaps.add(MonitoringGap.rule(stream, rule.rule(), noBaseline, noBaselineDetail));
            }
        }
        for (Map.Entry<List<Object>, Unjudged> e : unjudged.entrySet()) {
            gaps.add(MonitoringGap.windows(stream, (String) e.getKey().get(0), (GapReason) e.getKey().get(1),
                    e.getValue().detail + " (newest: the window ending " + e.getValue().lastWindowEnd + ")",
                    e.getValue().windows));
        }
        return gaps;
    }
}
