package org.oddswatch.deploy.sandbox;

import com.fasterxml.jackson.databind.JsonNode;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScriptedChange;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/**
 * The sandbox's text: a full summary screen for a terminal, and single lines for logs. Plain ASCII,
 * no colours. Reads estimates and alerts as their published JSON.
 */
public final class SandboxView {

    /** What one summary shows. */
    public record Frame(String bootstrap, String http, String serviceState, Instant simulatedNow, long sent,
                        boolean feedDone, OutcomeCounts.Snapshot counts, List<OutputWatcher.StreamView> streams,
                        List<JsonNode> alerts) {
    }

    private static final int ALERT_LINES = 8;

    private final Scenario scenario;
    private final double speed;
    private final Map<String, Set<String>> watchedByMonitor;

    /**
     * @param watchedByMonitor per monitor name, its watched term names
     */
    public SandboxView(Scenario scenario, double speed, Map<String, Set<String>> watchedByMonitor) {
        this.scenario = scenario;
        this.speed = speed;
        this.watchedByMonitor = Map.copyOf(watchedByMonitor);
    }

    /** The start-up lines: where the broker and the endpoints are. */
    public List<String> banner(String bootstrap, String http) {
        List<String> lines = new ArrayList<>();
        lines.add("oddswatch sandbox: simulated " + scenario.name() + " feed (invented data, seed "
                + scenario.options().seed() + ")");
        lines.add("  Kafka bootstrap: " + bootstrap + "   (any Kafka client on this machine can produce to it)");
        lines.add("  HTTP:            http://" + http + "/status  /metrics  /health");
        return lines;
    }

    /** The whole summary screen. */
    public List<String> screen(Frame f) {
        List<String> lines = new ArrayList<>();
        lines.add("oddswatch sandbox - simulated " + scenario.name() + " feed (invented data, seed "
                + scenario.options().seed() + ")");
        lines.add("broker " + f.bootstrap() + "   http://" + f.http() + "/status /metrics /health   service "
                + f.serviceState());
        lines.add(String.format(Locale.ROOT, "simulated time %s (week %d)   %s   %,d records sent%s",
                f.simulatedNow() == null ? "-" : day(f.simulatedNow()), week(f.simulatedNow()),
                speed > 0 ? String.format(Locale.ROOT, "%.0fx real time", speed) : "unpaced", f.sent(),
                f.feedDone() ? " (feed finished)" : ""));
        lines.add("script   " + script());
        lines.add("");
        lines.add(counts(f.counts()));
        String reasons = reasons(f.counts());
        if (!reasons.isEmpty()) {
            lines.add("         " + reasons);
        }
        lines.add("");
        lines.add(String.format(Locale.ROOT, "%-30s %-25s %8s %6s  %s", "STREAM", "WINDOW", "EVENTS", "CASES",
                "PREVALENCE (interval)"));
        if (f.streams().isEmpty()) {
            lines.add("  (no estimate yet: the first window closes after its width plus the lateness)");
        }
        for (OutputWatcher.StreamView s : f.streams()) {
            boolean first = true;
            for (JsonNode e : new JsonNode[] {s.lastFinal(), s.open()}) {
                if (e == null) {
                    continue;
                }
                lines.add(String.format(Locale.ROOT, "%-30s %-25s %,8d %,6d  %s", first ? s.stream() : "",
                        window(e), e.path("events").asLong(), e.path("cases").asLong(), prevalence(e)));
                if (e == s.lastFinal()) {
                    lines.addAll(oddsRatios(e, "    "));
                }
                first = false;
            }
        }
        lines.add("");
        lines.add("ALERTS (newest first)" + (f.alerts().isEmpty() ? ": none so far" : ""));
        List<JsonNode> alerts = f.alerts();
        for (int i = alerts.size() - 1, shown = 0; i >= 0 && shown < ALERT_LINES; i--, shown++) {
            lines.add("  " + alert(alerts.get(i)));
        }
        lines.add("");
        lines.add("A signal calls for investigation; it is not a diagnosis or proof of cause. Ctrl-C stops.");
        return lines;
    }

    /** One line per final estimate (plain mode). */
    public String finalLine(JsonNode e) {
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT, "final    %s %s events %d cases %d prevalence %s",
                e.path("stream").asText(), window(e), e.path("events").asLong(), e.path("cases").asLong(), prevalence(e)));
        for (String or : oddsRatios(e, "")) {
            b.append(" | ").append(or.trim().replaceAll(" {2,}", " "));
        }
        return b.toString();
    }

    /** One line per alert message. */
    public String alert(JsonNode a) {
        JsonNode subject = a.path("subject");
        String term = subject.path("term").asText();
        // calibration and the overall CUSUM charts are about the whole model: no term to name
        String what = term.equals("calibration") ? ""
                : " " + term + (subject.hasNonNull("level") ? "=" + subject.path("level").asText() : "");
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT, "%-10s %s %s%s, window ending %s",
                a.path("state").asText().toUpperCase(Locale.ROOT), a.path("stream").asText(), a.path("rule").asText(),
                what, day(a.path("windowEnd").asText())));
        if (a.hasNonNull("measure") && a.hasNonNull("value")) {
            // what is measured, its value and the side of the limit: "hosmer-lemeshow-p 9.38e-06 below 1.00e-04"
            b.append(String.format(Locale.ROOT, ": %s %.3g", a.path("measure").asText(), a.path("value").asDouble()));
            if (a.hasNonNull("direction") && a.hasNonNull("limit")) {
                boolean negate = "odds-ratio-z".equals(a.path("measure").asText())
                        && "below".equals(a.path("direction").asText());
                b.append(String.format(Locale.ROOT, " %s %.3g", a.path("direction").asText(),
                        negate ? -a.path("limit").asDouble() : a.path("limit").asDouble()));
            }
            if (a.path("measure").asText().equals("odds-ratio-z") && a.hasNonNull("observed")
                    && a.hasNonNull("baseline")) {
                b.append(String.format(Locale.ROOT, ", odds ratio %.3g vs baseline %.3g", a.path("observed").asDouble(),
                        a.path("baseline").asDouble()));
            }
            return b.toString();
        }
        if (a.hasNonNull("observed")) {
            b.append(String.format(Locale.ROOT, ": observed %.3g", a.path("observed").asDouble()));
        }
        if (a.hasNonNull("baseline")) {
            b.append(String.format(Locale.ROOT, " vs baseline %.3g", a.path("baseline").asDouble()));
        } else if (a.hasNonNull("limit")) {
            b.append(String.format(Locale.ROOT, " (limit %.3g)", a.path("limit").asDouble()));
        }
        JsonNode ev = a.path("evidence");
        if (ev.hasNonNull("z")) {
            b.append(String.format(Locale.ROOT, ", z %.2f", ev.path("z").asDouble()));
        }
        if (ev.hasNonNull("cusum")) {
            b.append(String.format(Locale.ROOT, ", CUSUM %.2f", ev.path("cusum").asDouble()));
        }
        return b.toString();
    }

    /** Records by outcome. */
    public String counts(OutcomeCounts.Snapshot c) {
        if (c == null) {
            return "records  (service starting)";
        }
        Map<String, Long> o = c.outcomes();
        return String.format(Locale.ROOT, "records  consumed %,d: accepted %,d, rejected %,d, late %,d, duplicate %,d",
                c.consumed(), o.getOrDefault("accepted", 0L), o.getOrDefault("rejected", 0L),
                o.getOrDefault("late", 0L), o.getOrDefault("duplicate", 0L));
    }

    private static String reasons(OutcomeCounts.Snapshot c) {
        if (c == null || c.reasons().isEmpty()) {
            return "";
        }
        StringBuilder b = new StringBuilder("by reason:");
        c.reasons().forEach((reason, n) -> b.append(' ').append(reason).append(' ').append(n).append(','));
        b.setLength(b.length() - 1);
        return b.toString();
    }

    private List<String> oddsRatios(JsonNode e, String indent) {
        List<String> lines = new ArrayList<>();
        String stream = e.path("stream").asText();
        int slash = stream.indexOf('/');
        Set<String> watched = watchedByMonitor.getOrDefault(slash < 0 ? stream : stream.substring(0, slash), Set.of());
        // the truth in force at the window's last instant (windows are half-open)
        Instant end = Instant.parse(e.path("windowEnd").asText()).minusMillis(1);
        for (JsonNode c : e.path("coefficients")) {
            String term = c.path("term").asText();
            if (!watched.contains(term) || !c.hasNonNull("oddsRatio")) {
                continue;
            }
            String level = c.hasNonNull("level") ? c.path("level").asText() : null;
            String label = term + (level == null ? "" : "=" + level);
            String interval = c.hasNonNull("lower") && c.hasNonNull("upper")
                    ? String.format(Locale.ROOT, "(%.2f-%.2f)", c.path("lower").asDouble(), c.path("upper").asDouble())
                    : "(no interval)";
            lines.add(String.format(Locale.ROOT, "%s%-28s odds ratio %6.2f %-13s  true value at window end %.2f", indent,
                    label, c.path("oddsRatio").asDouble(), interval, scenario.trueOddsRatio(term, level, end)));
        }
        String fit = e.path("fit").path("state").asText("");
        if (!fit.isEmpty() && !fit.equals("converged")) {
            lines.add(indent + "fit: " + fit);
        }
        return lines;
    }

    private static String prevalence(JsonNode e) {
        JsonNode p = e.path("prevalence");
        if (!p.hasNonNull("value")) {
            return "-";
        }
        return String.format(Locale.ROOT, "%.4f (%.4f-%.4f)", p.path("value").asDouble(), p.path("lower").asDouble(),
                p.path("upper").asDouble());
    }

    private static String window(JsonNode e) {
        return day(e.path("windowStart").asText()) + " to " + day(e.path("windowEnd").asText()).substring(5)
                + ("final".equals(e.path("status").asText()) ? " final" : " open");
    }

    private String script() {
        List<ScriptedChange> changes = scenario.changes();
        if (changes.isEmpty()) {
            return "no scripted change (steady)";
        }
        StringBuilder b = new StringBuilder();
        for (ScriptedChange c : changes) {
            b.append(b.length() == 0 ? "" : "; ").append(day(scenario.changeTime(c))).append(' ').append(c.describe());
        }
        return b.toString();
    }

    private int week(Instant now) {
        if (now == null) {
            return 0;
        }
        return (int) (java.time.Duration.between(scenario.options().start(), now).toDays() / 7);
    }

    private static String day(Instant t) {
        return t.toString().substring(0, 10);
    }

    private static String day(String rfc3339) {
        return rfc3339.length() >= 10 ? rfc3339.substring(0, 10) : rfc3339;
    }
}
