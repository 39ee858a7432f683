package org.oddswatch.deploy.audit;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.List;
import org.oddswatch.deploy.audit.AuditResult.FieldDifference;
import org.oddswatch.deploy.audit.AuditResult.Finding;
import org.oddswatch.deploy.audit.AuditResult.Reason;

/** The readable summary of an audit: counts per group, then each message that did not match. */
public final class AuditSummary {

    /** Printed wherever the summary reports alerts. */
    public static final String CAUTION = "Alerts call for investigation; they are not a diagnosis or proof of cause. "
            + "Local public-health rules, data-protection law and qualified epidemiologists decide what is done.";

    private AuditSummary() {
    }

    /** The summary of {@code result}, lines ending in {@code \n}. */
    public static String describe(AuditResult result, AlertLog sent, AlertLog replay) {
        StringBuilder b = new StringBuilder();
        side(b, "sent:  ", sent);
        side(b, "replay:", replay);
        b.append(String.format("  %-10s %d%n", "matched", result.matched().size()));
        b.append(String.format("  %-10s %d   in the replay, not sent%n", "missing", result.missing().size()));
        b.append(String.format("  %-10s %d   sent, not in the replay%n", "extra", result.extra().size()));
        b.append(String.format("  %-10s %d   same id, state and window end, other content%n", "differing",
                result.differing().size()));
        group(b, "missing (in the replay, not sent)", result.missing());
        group(b, "extra (sent, not in the replay)", result.extra());
        group(b, "differing (same id, state and window end, other content)", result.differing());
        if (!result.problems().isEmpty()) {
            b.append("not compared (").append(result.problems().size()).append(" line(s)):\n");
            result.problems().forEach(p -> b.append("  ").append(p).append('\n'));
        }
        if (!sent.messages().isEmpty() || !replay.messages().isEmpty()) {
            b.append(CAUTION).append('\n');
        }
        b.append(result.agree() ? "result: the sent alerts and the replay agree\n"
                : "result: the sent alerts and the replay do not agree\n");
        return b.toString();
    }

    private static void side(StringBuilder b, String label, AlertLog log) {
        b.append(label).append(' ').append(log.messages().size()).append(" alert message(s) from ").append(log.source());
        if (log.repeats() > 0) {
            b.append(", ").append(log.repeats()).append(" repeat(s) with the same content dropped");
        }
        if (log.outsideRange() > 0) {
            b.append(", ").append(log.outsideRange()).append(" outside the range left out");
        }
        b.append('\n');
    }

    private static void group(StringBuilder b, String title, List<Finding> findings) {
        if (findings.isEmpty()) {
            return;
        }
        b.append('\n').append(title).append(":\n");
        for (Finding f : findings) {
            JsonNode a = f.alert();
            b.append("  ").append(a.path("stream").asText("?")).append(": ").append(a.path("rule").asText("?"))
                    .append(" (").append(subject(a.path("subject"))).append(") ").append(f.key().state())
                    .append(", window ").append(a.path("windowStart").asText("?")).append(" to ")
                    .append(f.key().windowEnd()).append(", id ").append(f.key().id()).append('\n');
            for (FieldDifference d : f.fields()) {
                b.append("    ").append(d.field());
                if (d.field().equals("message")) {
                    b.append(": the texts differ\n");
                } else {
                    b.append(": sent ").append(value(d.sent())).append(", replay ").append(value(d.replay())).append('\n');
                }
            }
            if (f.counterpart() != null) {
                MessageKey c = f.counterpart();
                b.append("    the other side has for this window: ").append(c.state())
                        .append(c.id().equals(f.key().id()) ? " of the same episode" : " of episode " + c.id()).append('\n');
            }
            for (Reason r : f.reasons()) {
                b.append("    likely reason [").append(r.code()).append("]: ").append(r.detail()).append('\n');
            }
        }
    }

    private static String subject(JsonNode subject) {
        String term = subject.path("term").asText("?");
        return subject.hasNonNull("level") ? term + "=" + subject.get("level").asText() : term;
    }

    private static String value(JsonNode n) {
        return n == null ? "absent" : n.isTextual() ? n.asText() : n.toString();
    }
}
