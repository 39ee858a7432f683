package org.oddswatch.alerts.report;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.alerts.gaps.MonitoringGap;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertText;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * Writes {@code report.md} for a replay folder: per stream, one table row per final window (events,
 * positives, prevalence with interval, watched odds ratios with intervals, alerts whose window ends
 * there), then the alerts in order. Before the streams, a section "Not monitored" lists every
 * {@link MonitoringGap} with its reason (a failed or weak baseline, a rule that does not run,
 * windows a rule did not judge, a term missing from every event), or says that there is none.
 * Deterministic: the same inputs give a byte-identical file.
 *
 * <p>Small counts follow the {@link SmallCellPolicy} of every published output (default limit 5):
 * a count from 1 to 4 is withheld and shown as {@code <5}; positives are also withheld when the
 * negatives are 1 to 4 (else they could be worked out), and a prevalence or odds ratio resting on
 * withheld positives is withheld too. This follows the common small-cell practice (some agencies use
 * 11); local disclosure rules govern.
 */
public final class ReplayReport {

    private ReplayReport() {
    }

    /** Writes {@code dir/report.md} (creating {@code dir}) with the default small-cell limit. */
    public static Path write(Path dir, List<WindowEstimate> estimates, List<Alert> alerts, String title) {
        return write(dir, estimates, alerts, null, title, SmallCellPolicy.DEFAULT);
    }

    /** Writes {@code dir/report.md} (creating {@code dir}) without a "Not monitored" section. */
    public static Path write(Path dir, List<WindowEstimate> estimates, List<Alert> alerts, String title,
                             SmallCellPolicy cells) {
        return write(dir, estimates, alerts, null, title, cells);
    }

    /** Writes {@code dir/report.md} with its "Not monitored" section and the default small-cell limit. */
    public static Path write(Path dir, List<WindowEstimate> estimates, List<Alert> alerts, List<MonitoringGap> gaps,
                             String title) {
        return write(dir, estimates, alerts, gaps, title, SmallCellPolicy.DEFAULT);
    }

    /** Writes {@code dir/report.md} with its "Not monitored" section (none when {@code gaps} is null). */
    public static Path write(Path dir, List<WindowEstimate> estimates, List<Alert> alerts, List<MonitoringGap> gaps,
                             String title, SmallCellPolicy cells) {
        Path file = dir.resolve("report.md");
        try {
            Files.createDirectories(dir);
            Files.writeString(file, render(estimates, alerts, gaps, title, cells), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + file, e);
        }
        return file;
    }

    /** The report text with the default small-cell limit. */
    public static String render(List<WindowEstimate> estimates, List<Alert> alerts, String title) {
        return render(estimates, alerts, null, title, SmallCellPolicy.DEFAULT);
    }

    /** The report text without a "Not monitored" section. */
    public static String render(List<WindowEstimate> estimates, List<Alert> alerts, String title,
                                SmallCellPolicy cells) {
        return render(estimates, alerts, null, title, cells);
    }

    /** The report text with its "Not monitored" section and the default small-cell limit. */
    public static String render(List<WindowEstimate> estimates, List<Alert> alerts, List<MonitoringGap> gaps,
                                String title) {
        return render(estimates, alerts, gaps, title, SmallCellPolicy.DEFAULT);
    }

    /** The report text with its "Not monitored" section (none when {@code gaps} is null). */
    public static String render(List<WindowEstimate> estimates, List<Alert> alerts, List<MonitoringGap> gaps,
                                String title, SmallCellPolicy cells) {
        StringBuilder b = new StringBuilder();
        b.append("# ").append(title == null || title.isBlank() ? "oddswatch replay" : title).append("\n\n");
        b.append(AlertText.CAUTION).append(" Figures describe the events in the replayed input only.\n\n");
        b.append("Counts from 1 to ").append(cells.limit() - 1).append(" are withheld and shown as `").append(cells.withheldLabel())
                .append("`, and so are figures resting on them (common small-cell practice; local disclosure rules govern).")
                .append(" Windows are half-open, start included and end excluded; intervals are those of the estimates.\n");
        if (gaps != null) {
            gaps(b, gaps);
        }
        Map<String, List<WindowEstimate>> byStream = new LinkedHashMap<>();
        estimates.stream().filter(e -> e.status() == WindowStatus.FINAL)
                .sorted(Comparator.comparing(WindowEstimate::stream).thenComparing(WindowEstimate::windowEnd))
                .forEach(e -> byStream.computeIfAbsent(e.stream(), k -> new ArrayList<>()).add(e));
        List<Alert> sortedAlerts = alerts.stream()
                .sorted(Comparator.comparing(Alert::stream).thenComparing(Alert::windowEnd).thenComparing(Alert::rule)
                        .thenComparing(a -> a.subject().label()).thenComparing(a -> a.state().ordinal()))
                .toList();
        for (String stream : sortedAlerts.stream().map(Alert::stream).distinct().toList()) {
            byStream.putIfAbsent(stream, new ArrayList<>());
        }
        if (byStream.isEmpty()) {
            b.append("\nNo final windows and no alerts in this replay.\n");
        }
        for (Map.Entry<String, List<WindowEstimate>> s : byStream.entrySet()) {
            b.append("\n## Stream ").append(s.getKey()).append("\n\n");
            List<Alert> streamAlerts = sortedAlerts.stream().filter(a -> a.stream().equals(s.getKey())).toList();
            windows(b, s.getValue(), streamAlerts, cells);
            alertList(b, streamAlerts, cells);
        }
        return b.toString();
    }

    private static void gaps(StringBuilder b, List<MonitoringGap> gaps) {
        b.append("\n## Not monitored\n\n");
        if (gaps.isEmpty()) {
            b.append("Nothing: every stream had its baseline, every rule ran and judged every final window, and every"
                    + " term had values.\n");
            return;
        }
        b.append("A stream listed here was not watched as the definition intends; alerts cannot come from what is not"
                + " monitored. Reason codes in brackets.\n\n");
        for (MonitoringGap gap : gaps) {
            b.append("- ").append(gap.describe()).append('\n');
        }
    }

    private static void windows(StringBuilder b, List<WindowEstimate> windows, List<Alert> alerts,
                                SmallCellPolicy cells) {
        if (windows.isEmpty()) {
            b.append("No final windows.\n");
            return;
        }
        b.append("| window start | window end | events | positives | prevalence (interval) | fit | odds ratios (interval) | alerts |\n");
        b.append("|---|---|---:|---:|---|---|---|---|\n");
        for (WindowEstimate e : windows) {
            boolean casesWithheld = cells.assess(e).cases() != null;
            b.append("| ").append(e.windowStart()).append(" | ").append(e.windowEnd()).append(" | ")
                    .append(cells.count(e.events())).append(" | ")
                    .append(casesWithheld ? cells.withheldLabel() : Format.count(e.cases()))
                    .append(" | ").append(casesWithheld ? "withheld" : prevalence(e.prevalence()))
                    .append(" | ").append(e.fit() == null ? "none" : e.fit().state() + " (" + e.fit().method() + ")")
                    .append(" | ").append(casesWithheld ? "withheld" : oddsRatios(e)).append(" | ")
                    .append(alertsAt(alerts, e.windowEnd())).append(" |\n");
        }
    }

    private static void alertList(StringBuilder b, List<Alert> alerts, SmallCellPolicy cells) {
        b.append("\n### Alerts\n\n");
        if (alerts.isEmpty()) {
            b.append("None.\n");
            return;
        }
        for (Alert a : alerts) {
            b.append("- ").append(a.state()).append(" `").append(a.id()).append("` ").append(label(a))
                    .append(", window ").append(a.windowStart()).append(" to ").append(a.windowEnd()).append(": ")
                    .append(measured(a));
            if (a.observed() != null && !a.observed().equals(a.value())) {
                b.append(", observed ").append(Format.num(a.observed()));
            }
            if (a.baseline() != null) {
                b.append(", baseline ").append(Format.num(a.baseline()));
            }
            b.append(", on ").append(cells.count(a.events())).append(" events. Reproduce: `").append(a.replayCommand())
                    .append("`\n");
        }
    }

    private static String alertsAt(List<Alert> alerts, Instant windowEnd) {
        List<String> here = alerts.stream().filter(a -> a.windowEnd().equals(windowEnd))
                .map(a -> a.state() + " " + label(a)).toList();
        return here.isEmpty() ? "" : String.join("; ", here);
    }

    /**
     * "odds-ratio-drift household_contact=yes (odds-ratio-z)", "calibration (hosmer-lemeshow-p)": the
     * rule, the subject unless it is the calibration the rule's name already says, and the measure.
     */
    private static String label(Alert a) {
        String subject = a.subject().label();
        boolean sameAsRule = a.rule().equals(subject);
        return a.rule() + (sameAsRule ? "" : " " + subject) + (a.measure() == null ? "" : " (" + a.measure() + ")");
    }

    /** "hosmer-lemeshow-p 9.38e-06 below the limit 1.00e-04" (the clear limit for a clearing). */
    private static String measured(Alert a) {
        String name = a.measure() == null ? "observed" : a.measure();
        StringBuilder b = new StringBuilder(name).append(' ').append(a.withheld() != null
                ? "withheld for small numbers (" + a.withheld().get(0).reason() + ")"
                : Measurement.format(a.measure(), a.measure() == null ? a.observed() : a.value()));
        if (a.limit() != null) {
            String side = a.direction() == null ? "against" : a.direction() == Measurement.Side.WITHIN
                    ? "within the clear limit" : a.direction() + " the limit";
            boolean negate = Measurement.ODDS_RATIO_Z.equals(a.measure()) && a.direction() == Measurement.Side.BELOW;
            boolean twoSided = Measurement.ODDS_RATIO_Z.equals(a.measure()) && a.direction() == Measurement.Side.WITHIN;
            b.append(' ').append(side).append(' ').append(twoSided ? "±" : "")
                    .append(Measurement.format(a.measure(), negate ? -a.limit() : a.limit()));
        }
        return b.toString();
    }

    private static String prevalence(PrevalenceEstimate p) {
        if (p == null || p.value() == null) {
            return "n/a";
        }
        return Format.percent(p.value()) + " (" + Format.percent(p.lower()) + " to " + Format.percent(p.upper())
                + (p.method() == null ? "" : ", " + p.method()) + ")";
    }

    private static String oddsRatios(WindowEstimate e) {
        List<CoefficientEstimate> coefficients = e.coefficients().stream().filter(c -> c.oddsRatio() != null).toList();
        List<CoefficientEstimate> watched = coefficients.stream()
                .filter(c -> c.lrP() != null || c.profileLower() != null || c.profileUpper() != null).toList();
        List<String> parts = new ArrayList<>();
        for (CoefficientEstimate c : watched.isEmpty() ? coefficients : watched) {
            String label = c.level() == null ? c.term() : c.term() + "=" + c.level();
            parts.add(label + " " + Format.num(c.oddsRatio()) + " (" + Format.num(c.lower()) + " to "
                    + Format.num(c.upper()) + ")");
        }
        return parts.isEmpty() ? "none" : String.join("; ", parts);
    }
}
