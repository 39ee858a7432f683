package org.oddswatch.ingest.check;

import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/**
 * The result of checking a definition, and optionally sample events against it.
 *
 * @param monitors one line of facts per monitor
 * @param events what the sample events did, or null without events
 */
public record CheckReport(String file, List<MonitorFacts> monitors, EventCheck events) {

    /**
     * What a monitor reads and fits, and which rules run.
     *
     * @param rules every rule, on or off with the reason ({@code AlertRulesConfig.RuleSwitch#describe})
     * @param notices what the definition means that may not be expected (a rule running because it is not listed)
     */
    public record MonitorFacts(String monitor, String topic, int terms, List<String> watched, int designColumns,
                               String checksum, List<String> rules, List<String> notices) {
    }

    /**
     * @param records one outcome per record (accepted when any monitor accepted it)
     * @param monitors per monitor: every record's outcome for that monitor, streams included
     * @param examples the first record of each reason
     * @param gaps what the sample would leave unmonitored and why, once every window is closed
     * @param budgets per stream with a baseline, the false-alarm budget's split and the limits it
     *     derived ({@code FalseAlarmBudget.Share#describe}), in stream order
     */
    public record EventCheck(String input, OutcomeCounts.Snapshot records, List<MonitorCounts> monitors,
                             Map<String, Example> examples, List<MonitoringGap> gaps, Map<String, List<String>> budgets) {
        public EventCheck {
            budgets = budgets == null ? Map.of() : budgets;
        }
    }

    public record MonitorCounts(String monitor, int streams, OutcomeCounts.Snapshot counts) {
    }

    /** The first record seen with a reason: its line and detail. */
    public record Example(long line, String monitor, String detail) {
    }

    /** A plain-text rendering, one fact per line, for the command line. */
    public String describe() {
        StringBuilder text = new StringBuilder();
        text.append(file).append(": valid, ").append(monitors.size()).append(" monitor(s)\n");
        for (MonitorFacts m : monitors) {
            text.append("  ").append(m.monitor()).append(": topic ").append(m.topic()).append(", ").append(m.terms())
                    .append(" terms, ").append(m.designColumns()).append(" design columns, watched: ")
                    .append(m.watched().isEmpty() ? "none" : String.join(", ", m.watched())).append('\n');
            appendRules(text, m);
        }
        if (events != null) {
            OutcomeCounts.Snapshot r = events.records();
            text.append(events.input()).append(": ").append(r.consumed()).append(" record(s): ").append(outcomes(r))
                    .append('\n');
            for (MonitorCounts m : events.monitors()) {
                text.append("  ").append(m.monitor()).append(" (").append(m.streams()).append(" stream(s)): ")
                        .append(outcomes(m.counts())).append('\n');
                for (Map.Entry<String, Long> reason : m.counts().reasons().entrySet()) {
                    text.append("    ").append(reason.getKey()).append(": ").append(reason.getValue());
                    Example example = events.examples().get(reason.getKey());
                    if (example != null && example.line() > 0) {
                        text.append(" (first at line ").append(example.line()).append(": ").append(example.detail())
                                .append(')');
                    }
                    text.append('\n');
                }
            }
            events.budgets().forEach((stream, lines) -> {
                text.append("limits of stream ").append(stream).append(" (false-alarm budget):\n");
                lines.forEach(line -> text.append("  ").append(line).append('\n'));
            });
            appendGaps(text, events.gaps());
        }
        return text.toString();
    }

    /** The monitor's rules, one per line, and its notices. */
    public static void appendRules(StringBuilder text, MonitorFacts m) {
        text.append("    rules:\n");
        m.rules().forEach(rule -> text.append("      ").append(rule).append('\n'));
        m.notices().forEach(notice -> text.append("    note: ").append(notice).append('\n'));
    }

    /** What the sample would leave unmonitored, one line each, or that nothing is. */
    private static void appendGaps(StringBuilder text, List<MonitoringGap> gaps) {
        if (gaps.isEmpty()) {
            text.append("not monitored: nothing (every rule ran and judged every final window)\n");
            return;
        }
        text.append("not monitored (").append(gaps.size()).append("):\n");
        gaps.forEach(gap -> text.append("  ").append(gap.describe()).append('\n'));
    }

    /** For example {@code 200 accepted, 3 rejected, 0 late, 1 duplicate}. */
    private static String outcomes(OutcomeCounts.Snapshot counts) {
        return String.join(", ", counts.outcomes().entrySet().stream()
                .map(outcome -> outcome.getValue() + " " + outcome.getKey()).toList());
    }
}
