package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The per-window series of one stream's final windows, as parallel arrays (one entry per window, in
 * window-end order; null where a figure is absent or withheld by the small-cell rule):
 * window ends and starts (epoch milliseconds), events, positives, prevalence with its interval,
 * prevalence by stratum, the odds ratio of each watched term with its Wald and profile intervals,
 * calibration observed/expected and slope with their intervals, and the notes of windows whose fit
 * state is not {@code converged}.
 *
 * <p>The calibration slope's interval is {@code slope ± 1.96 se}, the Wald interval the calibration
 * rule compares with its band at its default {@code slopeZ}.
 */
final class StreamSeries {

    /** Normal quantile of the slope's drawn interval (the calibration rule's default slopeZ). */
    static final double SLOPE_Z = 1.96;

    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private StreamSeries() {
    }

    /** The arrays of {@code windows} (final windows of one stream, sorted by window end). */
    static ObjectNode of(List<WindowEstimate> windows, SmallCellPolicy cells) {
        ObjectNode s = NODES.objectNode();
        ArrayNode end = s.putArray("end");
        ArrayNode start = s.putArray("start");
        ArrayNode events = s.putArray("events");
        ArrayNode positives = s.putArray("positives");
        ObjectNode prevalence = s.putObject("prevalence");
        ArrayNode p = prevalence.putArray("v");
        ArrayNode pLo = prevalence.putArray("lo");
        ArrayNode pHi = prevalence.putArray("hi");
        ArrayNode notes = s.putArray("notes");
        List<SmallCellPolicy.Withheld> withheld = new ArrayList<>(windows.size());
        int withheldWindows = 0;
        String method = null;
        for (WindowEstimate e : windows) {
            SmallCellPolicy.Withheld w = cells.assess(e);
            withheld.add(w);
            withheldWindows += w.cases() != null ? 1 : 0;
            end.add(e.windowEnd().toEpochMilli());
            start.add(e.windowStart().toEpochMilli());
            addCount(events, w.events() != null ? null : e.events());
            addCount(positives, w.cases() != null ? null : e.cases());
            PrevalenceEstimate pe = w.cases() != null ? null : e.prevalence();
            Compact.add(p, pe == null ? null : pe.value());
            Compact.add(pLo, pe == null ? null : pe.lower());
            Compact.add(pHi, pe == null ? null : pe.upper());
            method = pe != null && pe.method() != null ? pe.method() : method;
            note(notes, e, w);
        }
        if (method != null) {
            prevalence.put("method", method);
        }
        s.put("withheldWindows", withheldWindows);
        s.set("strata", strata(windows, withheld));
        s.set("terms", terms(windows, withheld));
        ObjectNode calibration = calibration(windows, withheld);
        if (calibration != null) {
            s.set("calibration", calibration);
        }
        return s;
    }

    private static void addCount(ArrayNode array, Long value) {
        if (value == null) {
            array.addNull();
        } else {
            array.add(value);
        }
    }

    /** A note for a window whose fit is not {@code converged}: state, method and the estimate's notes. */
    private static void note(ArrayNode notes, WindowEstimate e, SmallCellPolicy.Withheld w) {
        if (e.fit() != null && e.fit().state() == FitState.CONVERGED) {
            return;
        }
        ObjectNode n = notes.addObject();
        n.put("end", e.windowEnd().toEpochMilli());
        n.put("state", e.fit() == null ? "no fit" : e.fit().state().toString());
        if (e.fit() != null && e.fit().method() != null) {
            n.put("method", e.fit().method().toString());
        }
        if (w.cases() != null) {
            n.put("text", "Notes withheld: " + w.cases() + ".");
        } else if (!e.notes().isEmpty()) {
            n.put("text", String.join(" ", e.notes()));
        }
    }

    private static ArrayNode strata(List<WindowEstimate> windows, List<SmallCellPolicy.Withheld> withheld) {
        Map<String, double[][]> byLevel = new LinkedHashMap<>();
        for (int i = 0; i < windows.size(); i++) {
            List<StratumPrevalence> strata = windows.get(i).strata();
            for (int j = 0; j < strata.size(); j++) {
                StratumPrevalence s = strata.get(j);
                double[][] series = byLevel.computeIfAbsent(s.term() + "=" + s.level(), k -> empty(3, windows.size()));
                if (!withheld.get(i).stratum(j)) {
                    series[0][i] = value(s.value());
                    series[1][i] = value(s.lower());
                    series[2][i] = value(s.upper());
                }
            }
        }
        ArrayNode out = NODES.arrayNode();
        byLevel.forEach((label, series) -> {
            ObjectNode o = out.addObject();
            o.put("label", label);
            band(o, "v", "lo", "hi", series);
        });
        return out;
    }

    private static ArrayNode terms(List<WindowEstimate> windows, List<SmallCellPolicy.Withheld> withheld) {
        Map<String, double[][]> byLabel = new LinkedHashMap<>();
        Map<String, CoefficientEstimate> first = new LinkedHashMap<>();
        for (int i = 0; i < windows.size(); i++) {
            for (CoefficientEstimate c : watched(windows.get(i))) {
                String label = c.level() == null ? c.term() : c.term() + "=" + c.level();
                first.putIfAbsent(label, c);
                double[][] series = byLabel.computeIfAbsent(label, k -> empty(5, windows.size()));
                if (withheld.get(i).cases() == null) {
                    series[0][i] = value(c.oddsRatio());
                    series[1][i] = value(c.lower());
                    series[2][i] = value(c.upper());
                    series[3][i] = value(c.profileLower());
                    series[4][i] = value(c.profileUpper());
                }
            }
        }
        ArrayNode out = NODES.arrayNode();
        byLabel.forEach((label, series) -> {
            CoefficientEstimate c = first.get(label);
            ObjectNode o = out.addObject();
            o.put("key", "or:" + label);
            o.put("label", label);
            if (c.reference() != null) {
                o.put("reference", c.reference());
            }
            if (c.per() != null) {
                o.put("per", Compact.round(c.per()));
            }
            band(o, "v", "lo", "hi", new double[][] {series[0], series[1], series[2]});
            if (hasValue(series[3]) || hasValue(series[4])) {
                o.set("plo", array(series[3]));
                o.set("phi", array(series[4]));
            }
        });
        return out;
    }

    /** Watched coefficients (those with a likelihood-ratio test or profile interval), else every odds ratio. */
    static List<CoefficientEstimate> watched(WindowEstimate e) {
        List<CoefficientEstimate> ratios = e.coefficients().stream().filter(c -> c.oddsRatio() != null).toList();
        List<CoefficientEstimate> watched = ratios.stream()
                .filter(c -> c.lrP() != null || c.profileLower() != null || c.profileUpper() != null).toList();
        return watched.isEmpty() ? ratios : watched;
    }

    private static ObjectNode calibration(List<WindowEstimate> windows, List<SmallCellPolicy.Withheld> withheld) {
        double[][] oe = empty(3, windows.size());
        double[][] slope = empty(3, windows.size());
        boolean any = false;
        for (int i = 0; i < windows.size(); i++) {
            CalibrationEstimate c = windows.get(i).calibration();
            any |= c != null;
            if (c == null || withheld.get(i).calibration() != null) {
                continue;
            }
            oe[0][i] = value(c.observedExpected());
            oe[1][i] = value(c.oeLower());
            oe[2][i] = value(c.oeUpper());
            slope[0][i] = value(c.slope());
            if (c.slope() != null && c.slopeSe() != null) {
                slope[1][i] = value(c.slope() - SLOPE_Z * c.slopeSe());
                slope[2][i] = value(c.slope() + SLOPE_Z * c.slopeSe());
            }
        }
        if (!any) {
            return null;
        }
        ObjectNode o = NODES.objectNode();
        band(o, "oe", "oeLo", "oeHi", oe);
        band(o, "slope", "slopeLo", "slopeHi", slope);
        return o;
    }

    private static void band(ObjectNode o, String v, String lo, String hi, double[][] series) {
        o.set(v, array(series[0]));
        o.set(lo, array(series[1]));
        o.set(hi, array(series[2]));
    }

    private static double[][] empty(int rows, int n) {
        double[][] a = new double[rows][n];
        for (double[] row : a) {
            java.util.Arrays.fill(row, Double.NaN);
        }
        return a;
    }

    private static double value(Double d) {
        return d == null ? Double.NaN : d;
    }

    private static boolean hasValue(double[] values) {
        for (double v : values) {
            if (Double.isFinite(v)) {
                return true;
            }
        }
        return false;
    }

    private static ArrayNode array(double[] values) {
        ArrayNode a = NODES.arrayNode(values.length);
        for (double v : values) {
            Compact.add(a, v);
        }
        return a;
    }
}
