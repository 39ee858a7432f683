package org.oddswatch.alerts.report.html;

import java.util.List;
import java.util.Objects;
import java.util.function.Function;
import org.oddswatch.alerts.engine.AlertRulesConfig;

/**
 * What {@link HtmlReport} needs besides the estimates and alerts.
 *
 * @param withholdBelow counts from 1 to {@code withholdBelow - 1} are withheld (at least 2)
 * @param rejects rejected and late records with their stream, reason and event time where known
 * @param rulesOfStream the rule settings of a stream (null when unknown), for limits no alert crossed
 */
public record ReportOptions(int withholdBelow, List<RejectMark> rejects,
                            Function<String, AlertRulesConfig> rulesOfStream) {

    public ReportOptions {
        new SmallCells(withholdBelow);
        rejects = List.copyOf(rejects);
        Objects.requireNonNull(rulesOfStream, "rulesOfStream");
    }

    /** No rejects and no rule settings; counts below {@code limit} withheld. */
    public static ReportOptions withholdingBelow(int limit) {
        return new ReportOptions(limit, List.of(), stream -> null);
    }

    /** These options with the replay's rejects. */
    public ReportOptions withRejects(List<RejectMark> marks) {
        return new ReportOptions(withholdBelow, marks, rulesOfStream);
    }

    /** These options with each stream's rule settings. */
    public ReportOptions withRules(Function<String, AlertRulesConfig> rules) {
        return new ReportOptions(withholdBelow, rejects, rules);
    }
}
