package org.oddswatch.alerts.gaps;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonValue;
import java.util.Objects;

/**
 * One thing about a stream that is not monitored, and why: the one model every surface reads
 * (the replay's command line, {@code report.md}, {@code summary.json}, {@code /status}, the
 * {@code oddswatch.monitoring.gaps} gauge and {@code check --events}).
 *
 * <ul>
 *   <li>{@link Scope#BASELINE}: the baseline failed, is weak, unreadable or still pending;</li>
 *   <li>{@link Scope#RULE}: a rule does not run on the stream ({@code subject} is the rule);</li>
 *   <li>{@link Scope#WINDOWS}: final windows a running rule did not judge ({@code subject} is the
 *       rule, or null for every rule, {@code windows} how many, {@code detail} the newest reason in
 *       words);</li>
 *   <li>{@link Scope#TERM}: a term without a value in every accepted event ({@code subject} is the term).</li>
 * </ul>
 * Details never hold record values: they name terms, rules, counts, fit states and periods only.
 *
 * @param stream the stream
 * @param scope what is not monitored
 * @param subject the rule or term concerned, or null for the baseline (and for windows no rule judged)
 * @param reason a code from a fixed set
 * @param detail the reason in words
 * @param windows for {@link Scope#WINDOWS}, the final windows not judged; otherwise null
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record MonitoringGap(String stream, Scope scope, String subject, GapReason reason, String detail,
                            Long windows) {

    /** What is not monitored. */
    public enum Scope {
        BASELINE("baseline"), RULE("rule"), WINDOWS("windows"), TERM("term");

        private final String label;

        Scope(String label) {
            this.label = label;
        }

        @JsonValue
        public String label() {
            return label;
        }

        @Override
        public String toString() {
            return label;
        }
    }

    public MonitoringGap {
        Objects.requireNonNull(stream, "stream");
        Objects.requireNonNull(scope, "scope");
        Objects.requireNonNull(reason, "reason");
    }

    public static MonitoringGap baseline(String stream, GapReason reason, String detail) {
        return new MonitoringGap(stream, Scope.BASELINE, null, reason, detail, null);
    }

    public static MonitoringGap rule(String stream, String rule, GapReason reason, String detail) {
        return new MonitoringGap(stream, Scope.RULE, rule, reason, detail, null);
    }

    public static MonitoringGap windows(String stream, String rule, GapReason reason, String detail, long windows) {
        return new MonitoringGap(stream, Scope.WINDOWS, rule, reason, detail, windows);
    }

    public static MonitoringGap term(String stream, String term, String detail) {
        return new MonitoringGap(stream, Scope.TERM, term, GapReason.TERM_MISSING, detail, null);
    }

    /**
     * One line for people, e.g. {@code north: rule bernoulli-cusum not running [baseline-failed]:
     * the fit did not converge ...} or {@code north: 12 final window(s) not judged by calibration
     * [too-few-events]: 40 events, fewer than the minimum 100}.
     */
    public String describe() {
        String what = switch (scope) {
            case BASELINE -> reason == GapReason.BASELINE_WEAK ? "baseline weak (rules run on it)" : "no baseline in use";
            case RULE -> "rule " + subject + " not running";
            case WINDOWS -> windows + " final window(s) not judged by " + (subject == null ? "any rule" : subject);
            case TERM -> "term " + subject + " missing from every event";
        };
        return stream + ": " + what + " [" + reason.code() + "]" + (detail == null ? "" : ": " + detail);
    }
}
