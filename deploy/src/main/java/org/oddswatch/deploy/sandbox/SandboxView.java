package org.oddswatch.deploy.sandbox;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.File;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScriptedChange;
import org.oddswatch.ingest.pipeline.OutcomeCounts;

/**
 * The sandbox's text: a summary screen for a terminal that fits in {@link #MAX_LINES} lines whatever
 * the number of streams, alerts and reject reasons, and single lines for plain output. Plain ASCII,
 * no colours. Reads estimates and alerts as their published JSON.
 *
 * <p>The screen shows at most {@link #STREAM_LINES} streams, one line each, chosen by interest: streams
 * with an open alert episode first, then streams with a part not monitored (a failed baseline, a rule that
 * does not run, a term missing from every event), then the ones with the most events in their newest
 * window. Every stream, with its charts, is on the live page. Below them the open incidents, as
 * on-call receives them (one per change, newest first, at most {@link #INCIDENT_LINES}), each with
 * its agreeing rules as evidence; the episodes' own messages are on the live page and the alerts
 * topic.
 */
public final class SandboxView {

    /** Lines of one summary screen, at most: it fits a 24-line terminal with the shell's prompt. */
    public static final int MAX_LINES = 20;
    static final int STREAM_LINES = 4;
    static final int GAP_LINES = 2;
    static final int INCIDENT_LINES = 3;
    /** Width of a line when the terminal does not say. */
    static final int DEFAULT_WIDTH = 120;

    /** The caution every summary ends with; never cut, each line fits an 80-column terminal. */
    public static final List<String> CAUTION = List.of(
            "A signal calls for investigation; it is not a diagnosis or proof of cause.",
            "Local public-health rules, data-protection law and qualified epidemiologists",
            "decide what is done. The data are invented. Ctrl-C stops.");

    /**
     * What one summary shows.
     *
     * @param page the live page's address, {@code http://host:port/}
     * @param logFile the log file as shown to the user
     * @param alerts the alert messages read from the alerts topic, oldest first
     * @param incidents the open incidents' newest messages as the service published them (its live
     *     API's {@code incidents.open}), oldest first
     * @param gaps what is not monitored, from {@code /status}
     * @param log the warnings noted in the log file
     */
    public record Frame(String page, String logFile, String bootstrap, String serviceState, Instant simulatedNow,
                        long sent, boolean feedDone, OutcomeCounts.Snapshot counts,
                        List<OutputWatcher.StreamView> streams, List<JsonNode> alerts, List<JsonNode> incidents,
                        List<MonitoringGap> gaps, SandboxLog.Notes log) {
    }

    private final Scenario scenario;
    private final double speed;
    private final Map<String, Set<String>> watchedByMonitor;
    private final int width;

    /**
     * @param watchedByMonitor per monitor name, its watched term names
     */
    public SandboxView(Scenario scenario, double speed, Map<String, Set<String>> watchedByMonitor) {
        this(scenario, speed, watchedByMonitor, DEFAULT_WIDTH);
    }

    /** @param width longer lines of the screen are cut to this many characters */
    public SandboxView(Scenario scenario, double speed, Map<String, Set<String>> watchedByMonitor, int width) {
        this.scenario = scenario;
        this.speed = speed;
        this.watchedByMonitor = Map.copyOf(watchedByMonitor);
        this.width = Math.max(40, width);
    }

    /**
     * The terminal's width: {@code COLUMNS} when the shell exports it, else what {@code stty size}
     * says of the controlling terminal, else {@link #DEFAULT_WIDTH}.
     */
    public static int terminalWidth() {
        try {
            String columns = System.getenv("COLUMNS");
            if (columns != null) {
                return Integer.parseInt(columns.trim());
            }
            Process stty = new ProcessBuilder("stty", "size").redirectInput(new File("/dev/tty"))
                    .redirectError(ProcessBuilder.Redirect.DISCARD).start();
            if (!stty.waitFor(2, TimeUnit.SECONDS)) {
                stty.destroyForcibly();
                return DEFAULT_WIDTH;
            }
            String[] rowsColumns = new String(stty.getInputStream().readAllBytes(), StandardCharsets.US_ASCII).trim()
                    .split("\\s+");
            return rowsColumns.length == 2 ? Integer.parseInt(rowsColumns[1]) : DEFAULT_WIDTH;
        } catch (IOException | NumberFormatException e) {
            return DEFAULT_WIDTH;
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            return DEFAULT_WIDTH;
        }
    }

    /**
     * The first lines printed: the live page's address first, then the log file and the broker.
     *
     * @param verbose whether log lines are shown on the terminal as well
     */
    public List<String> banner(String page, String logFile, String bootstrap, boolean verbose) {
        return List.of(
                "page     " + page + "   (the live page; " + page + "status, /metrics and /health beside it)",
                "log      " + logFile + "   (log lines and the alert messages as JSON"
                        + (verbose ? "; --verbose: shown here too)" : "; --verbose shows them here too)"),
                "Kafka bootstrap: " + bootstrap + "   (any Kafka client on this machine can produce to it)",
                "oddswatch sandbox: simulated " + scenario.name() + " feed (invented data, seed "
                        + scenario.options().seed() + ")");
    }

    /**
     * The whole summary screen: at most {@link #MAX_LINES} lines, none longer than the width but the
     * caution's (under 80 characters), which are never cut.
     */
    public List<String> screen(Frame f) {
        List<String> lines = new ArrayList<>();
        lines.add("oddswatch sandbox   page " + f.page() + "   log " + f.logFile());
        lines.add(String.format(Locale.ROOT, "service %s   broker %s   simulated %s (week %d, invented data), %s, %,d records sent%s",
                f.serviceState(), f.bootstrap(), f.simulatedNow() == null ? "-" : day(f.simulatedNow()),
                week(f.simulatedNow()), speed > 0 ? String.format(Locale.ROOT, "%.0fx real time", speed) : "unpaced",
                f.sent(), f.feedDone() ? " (feed finished)" : ""));
        lines.add("script   " + script());
        String reasons = reasons(f.counts());
        lines.add(counts(f.counts()) + (reasons.isEmpty() ? "" : "; " + reasons));
        Map<String, Integer> open = openAlertsByStream(f.alerts());
        Set<String> gapStreams = new HashSet<>();
        List<MonitoringGap> gaps = ordered(f.gaps());
        for (MonitoringGap g : gaps) {
            if (g.scope() != MonitoringGap.Scope.WINDOWS) {
                gapStreams.add(g.stream());
            }
        }
        lines.addAll(streams(f.streams(), open, gapStreams));
        lines.addAll(gaps(gaps));
        lines.addAll(incidents(f.incidents(), f.alerts(), open));
        SandboxLog.Notes log = f.log() == null ? SandboxLog.Notes.NONE : f.log();
        lines.add(log.warnings() == 0 ? "log      no warnings"
                : String.format(Locale.ROOT, "log      %d warning(s), the newest: %s", log.warnings(), log.newest()));
        List<String> cut = new ArrayList<>(lines.size() + CAUTION.size());
        for (String line : lines) {
            cut.add(line.length() <= width ? line : line.substring(0, width - 3) + "...");
        }
        cut.addAll(CAUTION);
        return cut;
    }

    private List<String> streams(List<OutputWatcher.StreamView> all, Map<String, Integer> open, Set<String> gapStreams) {
        List<OutputWatcher.StreamView> ranked = new ArrayList<>(all);
        ranked.sort(Comparator.<OutputWatcher.StreamView>comparingInt(s -> open.containsKey(s.stream()) ? 0
                        : gapStreams.contains(s.stream()) ? 1 : 2)
                .thenComparing(Comparator.comparingLong(SandboxView::events).reversed())
                .thenComparing(OutputWatcher.StreamView::stream));
        List<String> lines = new ArrayList<>();
        if (all.isEmpty()) {
            lines.add("streams  none yet: the first window closes after its width plus the lateness");
            return lines;
        }
        List<OutputWatcher.StreamView> top = ranked.subList(0, Math.min(STREAM_LINES, ranked.size()));
        int name = Math.max(16, top.stream().mapToInt(s -> s.stream().length()).max().orElse(0));
        String shown = all.size() <= STREAM_LINES ? String.valueOf(all.size()) : STREAM_LINES + " of " + all.size();
        lines.add(String.format(Locale.ROOT, "streams  %-" + (name - 1) + "s %-5s %7s  %-17s  %s", shown,
                "ends", "events", "prevalence", "watched odds ratio (95% interval), true value"));
        for (OutputWatcher.StreamView s : top) {
            String mark = open.containsKey(s.stream()) ? "alert" : gapStreams.contains(s.stream()) ? "gap"
                    : s.lastFinal() == null && s.open() != null ? "open" : "";
            lines.add(streamLine(String.format(Locale.ROOT, "  %-5s %-" + name + "s ", mark, s.stream()), s));
        }
        return lines;
    }

    /**
     * Window end (of the newest final window, or of the open one before the first is final), events,
     * prevalence in percent with its interval, then the watched odds ratios, as many as fit the width
     * whole ({@code +N} says how many did not).
     */
    private String streamLine(String prefix, OutputWatcher.StreamView s) {
        JsonNode e = s.lastFinal() != null ? s.lastFinal() : s.open();
        if (e == null) {
            return prefix + "-";
        }
        JsonNode p = e.path("prevalence");
        String prevalence = p.hasNonNull("value") ? String.format(Locale.ROOT, "%.2f%% (%.2f-%.2f)",
                100 * p.path("value").asDouble(), 100 * p.path("lower").asDouble(), 100 * p.path("upper").asDouble())
                : "-";
        StringBuilder b = new StringBuilder(prefix).append(String.format(Locale.ROOT, "%-5s %,7d  %-17s",
                day(e.path("windowEnd").asText()).substring(5), e.path("events").asLong(), prevalence));
        List<String> ratios = oddsRatios(e, "  ", "%s%s %.2f %s %.2f");
        for (int i = 0; i < ratios.size(); i++) {
            String more = i + 1 < ratios.size() ? "  +" + (ratios.size() - i - 1) : "";
            if (b.length() + ratios.get(i).length() + more.length() > width) {
                return b.append("  +").append(ratios.size() - i).toString();
            }
            b.append(ratios.get(i));
        }
        return b.toString();
    }

    private static long events(OutputWatcher.StreamView s) {
        JsonNode e = s.lastFinal() != null ? s.lastFinal() : s.open();
        return e == null ? 0 : e.path("events").asLong();
    }

    /** Baseline, rule and term gaps before windows not judged; each once. */
    private static List<MonitoringGap> ordered(List<MonitoringGap> gaps) {
        Map<String, MonitoringGap> unique = new LinkedHashMap<>();
        for (MonitoringGap g : gaps == null ? List.<MonitoringGap>of() : gaps) {
            unique.putIfAbsent(g.describe(), g);
        }
        List<MonitoringGap> ordered = new ArrayList<>(unique.values());
        ordered.sort(Comparator.comparingInt(g -> g.scope() == MonitoringGap.Scope.WINDOWS ? 1 : 0));
        return ordered;
    }

    private static List<String> gaps(List<MonitoringGap> gaps) {
        List<String> lines = new ArrayList<>();
        if (gaps.isEmpty()) {
            lines.add("not monitored: nothing (every stream has its baseline, rules and terms)");
            return lines;
        }
        lines.add("not monitored: " + gaps.size() + (gaps.size() > GAP_LINES ? ", the first " + GAP_LINES
                + " shown (all in /status and on the page)" : ""));
        for (MonitoringGap g : gaps.subList(0, Math.min(GAP_LINES, gaps.size()))) {
            lines.add("  " + g.describe());
        }
        return lines;
    }

    /** Per stream, its subjects whose newest message is not {@code cleared}. */
    private static Map<String, Integer> openAlertsByStream(List<JsonNode> alerts) {
        Map<String, Integer> open = new HashMap<>();
        for (JsonNode a : newestBySubject(alerts).values()) {
            if (!"cleared".equals(a.path("state").asText())) {
                open.merge(a.path("stream").asText(), 1, Integer::sum);
            }
        }
        return open;
    }

    /** The newest message of every (stream, rule, subject), in arrival order of those newest messages. */
    private static Map<String, JsonNode> newestBySubject(List<JsonNode> alerts) {
        Map<String, JsonNode> newest = new LinkedHashMap<>();
        for (JsonNode a : alerts) {
            String key = a.path("stream").asText() + "|" + a.path("rule").asText() + "|" + a.path("subject");
            newest.remove(key);
            newest.put(key, a);
        }
        return newest;
    }

    /**
     * The open incidents, newest first, one line each: its latest change, id, streams, first window
     * and its episodes as evidence. Without one open, the newest alert message (or that there is none).
     */
    private List<String> incidents(List<JsonNode> incidents, List<JsonNode> alerts, Map<String, Integer> openByStream) {
        List<String> lines = new ArrayList<>();
        int episodes = openByStream.values().stream().mapToInt(Integer::intValue).sum();
        List<JsonNode> open = new ArrayList<>(incidents == null ? List.of() : incidents);
        if (open.isEmpty()) {
            lines.add(alerts.isEmpty() ? "alerts   none so far"
                    : "incidents none open; " + episodes + " alert episode(s) open; newest message: "
                            + alert(alerts.get(alerts.size() - 1)));
            return lines;
        }
        java.util.Collections.reverse(open);
        lines.add(String.format(Locale.ROOT, "incidents %d open (one per change, newest first); %d alert episode(s) open",
                open.size(), episodes));
        for (JsonNode incident : open.subList(0, Math.min(INCIDENT_LINES, open.size()))) {
            lines.add("  " + incident(incident));
        }
        return lines;
    }

    /**
     * One line per incident message: "UPDATED  1a2b3c4d from 2026-04-20, 2 episodes (1 open) on
     * respiratory +1: odds-ratio-drift household_contact=yes continuing (odds-ratio-z 3.41 above
     * 3.00); ..." (its latest change, the id's first 8 digits, the first window, its episodes, the
     * first stream and how many more, then each episode). A figure the incident withholds for small
     * numbers is shown as withheld.
     */
    public String incident(JsonNode i) {
        List<String> streams = texts(i.path("streams"));
        String id = i.path("id").asText();
        int episodes = i.path("evidence").size();
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT, "%-8s %s from %s, %d episode%s (%d open) on %s%s:",
                i.path("change").asText().toUpperCase(Locale.ROOT), id.substring(0, Math.min(8, id.length())),
                day(i.path("from").asText()), episodes, episodes == 1 ? "" : "s", i.path("openEpisodes").asInt(),
                streams.isEmpty() ? "-" : streams.get(0), streams.size() > 1 ? " +" + (streams.size() - 1) : ""));
        String separator = " ";
        for (JsonNode e : i.path("evidence")) {
            String subject = e.path("subject").asText();
            b.append(separator).append(e.path("rule").asText()).append(subject.equals("calibration") ? "" : " " + subject)
                    .append(' ').append(e.path("state").asText());
            if (e.has("withheld")) {
                b.append(" (").append(e.path("measure").asText()).append(" withheld, small numbers)");
            } else if (e.hasNonNull("measure") && e.hasNonNull("value")) {
                b.append(" (").append(measured(e)).append(')');
            }
            separator = "; ";
        }
        return b.toString();
    }

    private static List<String> texts(JsonNode array) {
        List<String> out = new ArrayList<>();
        array.forEach(n -> out.add(n.asText()));
        return out;
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
        if (a.has("withheld") && !a.has("value")) {
            return b.append(": figures withheld for small numbers").toString();
        }
        if (a.hasNonNull("measure") && a.hasNonNull("value")) {
            // what is measured, its value and the side of the limit: "hosmer-lemeshow-p 9.38e-06 below 1.00e-04"
            b.append(": ").append(measured(a));
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

    /** The measure, its value and the side of the limit: "hosmer-lemeshow-p 9.38e-06 below 1.00e-04". */
    private static String measured(JsonNode a) {
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT, "%s %.3g", a.path("measure").asText(),
                a.path("value").asDouble()));
        if (a.hasNonNull("direction") && a.hasNonNull("limit")) {
            boolean negate = "odds-ratio-z".equals(a.path("measure").asText()) && "below".equals(a.path("direction").asText());
            b.append(String.format(Locale.ROOT, " %s %.3g", a.path("direction").asText(),
                    negate ? -a.path("limit").asDouble() : a.path("limit").asDouble()));
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
        return oddsRatios(e, indent, "%s%-28s odds ratio %6.2f %-13s  true value at window end %.2f");
    }

    /**
     * The watched odds ratios of an estimate, one line each by {@code format} (indent, label, odds
     * ratio, interval, true value), and the fit state when it is not {@code converged}.
     */
    private List<String> oddsRatios(JsonNode e, String indent, String format) {
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
            lines.add(String.format(Locale.ROOT, format, indent, label, c.path("oddsRatio").asDouble(), interval, scenario.trueOddsRatio(term, level, end)));
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

    /** The scenario's scripted changes in one line. */
    public String script() {
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
