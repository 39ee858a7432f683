package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.List;
import java.util.Map;
import java.util.TreeSet;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.rules.Format;

/**
 * The limits of a stream's rule settings, drawn whether or not an alert crossed them: the calibration
 * bands of observed/expected and slope, the odds-ratio bounds of the bounds rule, and the CUSUM limit
 * h. The drift rule's limit is on |z|, not on the odds ratio, so it is stated in words on each odds
 * ratio chart instead of drawn. A rule that is off (its section absent) adds nothing.
 */
final class RuleLines {

    private RuleLines() {
    }

    /**
     * Adds the limits of {@code rules} to {@code limits} (chart key to values) and notes (chart key to
     * text) to {@code lines}.
     *
     * @param oddsRatioCharts keys of the stream's odds-ratio charts ({@code or:<term=level>})
     * @param cusumCharts keys of the stream's CUSUM charts
     */
    static void add(AlertRulesConfig rules, List<String> oddsRatioCharts, List<String> cusumCharts,
                    Map<String, TreeSet<Double>> limits, ObjectNode lines) {
        if (rules == null) {
            return;
        }
        AlertRulesConfig.Calibration calibration = rules.calibration();
        if (calibration != null) {
            band(limits, "oe", calibration.observedExpected());
            band(limits, "slope", calibration.slope());
        }
        if (rules.oddsRatioBounds() != null) {
            for (AlertRulesConfig.TermBounds bounds : rules.oddsRatioBounds().terms()) {
                for (String chart : oddsRatioCharts) {
                    String label = chart.substring("or:".length());
                    boolean match = bounds.level() == null ? label.equals(bounds.term())
                            || label.startsWith(bounds.term() + "=") : label.equals(bounds.term() + "=" + bounds.level());
                    if (match) {
                        add(limits, chart, bounds.above());
                        add(limits, chart, bounds.below());
                    }
                }
            }
        }
        if (rules.oddsRatioDrift() != null) {
            String note = "Drift rule: raises at |z| ≥ " + Format.stat(rules.oddsRatioDrift().limit())
                    + " against the baseline, counts towards clearing below " + Format.stat(rules.oddsRatioDrift().clearLimit())
                    + " (per-term settings may differ).";
            oddsRatioCharts.forEach(chart -> node(lines, chart).put("note", note));
        }
        if (rules.cusum() != null && rules.cusum().limit() != null) {
            cusumCharts.forEach(chart -> add(limits, chart, rules.cusum().limit()));
            if (cusumCharts.isEmpty()) {
                lines.put("cusumNote", "CUSUM charts (limit h = " + Format.stat(rules.cusum().limit())
                        + "): no signal in this replay.");
            }
        } else if (rules.cusum() != null && cusumCharts.isEmpty()) {
            // a limit derived from the false-alarm budget is on each stream's estimates, not in the rules
            lines.put("cusumNote", "CUSUM charts (limit from the false-alarm budget): no signal in this replay.");
        }
    }

    private static void band(Map<String, TreeSet<Double>> limits, String chart, AlertRulesConfig.Band band) {
        if (band != null) {
            add(limits, chart, band.min());
            add(limits, chart, band.max());
        }
    }

    private static void add(Map<String, TreeSet<Double>> limits, String chart, Double value) {
        if (value != null && Double.isFinite(value)) {
            limits.computeIfAbsent(chart, k -> new TreeSet<>()).add(Compact.round(value));
        }
    }

    /** The object of {@code chart} in {@code lines}, created when absent. */
    static ObjectNode node(ObjectNode lines, String chart) {
        return lines.has(chart) ? (ObjectNode) lines.get(chart) : lines.putObject(chart);
    }
}
