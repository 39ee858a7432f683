package org.oddswatch.alerts.report.html;

import java.util.List;
import java.util.Objects;
import java.util.function.Function;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.privacy.SmallCellPolicy;

/**
 * What {@link HtmlReport} needs besides the estimates and alerts.
 *
 * @param cells the small-cell rule of the published outputs (counts from 1 to {@code limit - 1} are withheld)
 * @param rejects rejected and late records with their stream, reason and event time where known
 * @param rulesOfStream the rule settings of a stream (null when unknown), for limits no alert crossed
 */
public record ReportOptions(SmallCellPolicy cells, List<RejectMark> rejects,
                            Function<String, AlertRulesConfig> rulesOfStream) {

    public ReportOptions {
        Objects.requireNonNull(cells, "cells");
        rejects = List.copyOf(rejects);
        Objects.requireNonNull(rulesOfStream, "rulesOfStream");
    }

    /** No rejects and no rule settings; small cells withheld by {@code cells}. */
    public static ReportOptions withholding(SmallCellPolicy cells) {
        return new ReportOptions(cells, List.of(), stream -> null);
    }

    /** These options with the replay's rejects. */
    public ReportOptions withRejects(List<RejectMark> marks) {
        return new ReportOptions(cells, marks, rulesOfStream);
    }

    /** These options with each stream's rule settings. */
    public ReportOptions withRules(Function<String, AlertRulesConfig> rules) {
        return new ReportOptions(cells, rejects, rules);
    }
}
