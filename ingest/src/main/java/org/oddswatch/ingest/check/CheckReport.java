package org.oddswatch.ingest.check;

import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.FalseAlarmBudget;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/**
 * What sample events did under a definition.
 *
 * @param input the events file
 * @param records one outcome per record (accepted when any monitor accepted it)
 * @param monitors per monitor: every record's outcome for that monitor, streams included
 * @param examples the first record of each reason
 * @param gaps what the sample would leave unmonitored and why, once every window is closed
 * @param budgets per stream with a baseline, the false-alarm budget's split and the limits it derived
 *     ({@code FalseAlarmBudget.Share#describe}), in stream order
 */
public record CheckReport(String input, OutcomeCounts.Snapshot records, List<MonitorCounts> monitors,
                          Map<String, Example> examples, List<MonitoringGap> gaps, Map<String, List<String>> budgets) {

    public record MonitorCounts(String monitor, int streams, OutcomeCounts.Snapshot counts) {
    }

    /** The first record seen with a reason: its line and detail. */
    public record Example(long line, String monitor, String detail) {
    }

    /** A plain-text rendering, one fact per line, for the command line. */
    public String describe() {
        StringBuilder text = new StringBuilder();
        text.append(input).append(": ").append(records.consumed()).append(" record(s): ").append(outcomes(records))
                .append('\n');
        for (MonitorCounts m : monitors) {
            text.append("  ").append(m.monitor()).append(" (").append(m.streams()).append(" stream(s)): ")
                    .append(outcomes(m.counts())).append('\n');
            m.counts().reasons().forEach((reason, count) -> {
                Example example = examples.get(reason);
                text.append("    ").append(reason).append(": ").append(count)
                        .append(example == null || example.line() <= 0 ? ""
                                : " (first at line " + example.line() + ": " + example.detail() + ")").append('\n');
            });
        }
        budgets.forEach((stream, lines) -> {
            text.append("limits of stream ").append(stream).append(" (false-alarm budget):\n");
            lines.forEach(line -> text.append("  ").append(line).append('\n'));
        });
        if (gaps.isEmpty()) {
            return text.append("not monitored: nothing (every rule ran and judged every final window)\n").toString();
        }
        text.append("not monitored (").append(gaps.size()).append("):\n");
        gaps.forEach(gap -> text.append("  ").append(gap.describe()).append('\n'));
        return text.toString();
    }

    /** The monitor's rules, on or off with the reason, one per line, its false-alarm budget and its notices. */
    public static void appendRules(StringBuilder text, MonitorDefinition monitor) {
        text.append("    rules:\n");
        monitor.rules().allSwitches().stream().map(AlertRulesConfig.RuleSwitch::describe)
                .forEach(rule -> text.append("      ").append(rule).append('\n'));
        text.append("      ").append(FalseAlarmBudget.describe(monitor.rules(),
                monitor.split() == null ? 1 : monitor.split().maxStreams())).append('\n');
        monitor.notices().forEach(notice -> text.append("    note: ").append(notice).append('\n'));
    }

    /** For example {@code 200 accepted, 3 rejected, 0 late, 1 duplicate}. */
    private static String outcomes(OutcomeCounts.Snapshot counts) {
        return String.join(", ", counts.outcomes().entrySet().stream()
                .map(outcome -> outcome.getValue() + " " + outcome.getKey()).toList());
    }
}
