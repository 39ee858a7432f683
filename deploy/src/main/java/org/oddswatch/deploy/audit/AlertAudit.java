package org.oddswatch.deploy.audit;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.TextNode;
import java.time.Instant;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.oddswatch.deploy.audit.AuditResult.FieldDifference;
import org.oddswatch.deploy.audit.AuditResult.Finding;
import org.oddswatch.deploy.audit.AuditResult.Reason;

/**
 * Compares the alert messages the live service sent with a replay's, message by message.
 *
 * <p>Messages match by {@link MessageKey} (episode id, state, window end). Two messages with the same
 * key agree when every field agrees, numbers by value, except {@code replayCommand} and the
 * "Reproduce with" sentence of {@code message}: they name the input (a topic live, a file in a replay)
 * and differ by design. A message without a partner on the other side is paired, for its reasons, with
 * the other side's message of the same window and episode (another state), or else of the same
 * stream, rule, subject and window (another episode id: raised at another window).
 *
 * <p>Reasons are claimed only where the two messages show them: other limits (the definitions'
 * rule settings differ), another baseline value or another baseline in the text (the baselines
 * differ; with two definition checksums there, the baselines were fitted under other definitions),
 * more events in the replay's window (records arrived after the live decision), fewer (the replay's
 * input lacks records), or a window outside what the replay covered. Otherwise {@code unknown}.
 */
public final class AlertAudit {

    private static final String REPRODUCE = " Reproduce with: ";
    private static final String BASELINE = " Baseline: ";
    private static final Pattern CHECKSUM = Pattern.compile("definition ([0-9a-f]{8,})");

    private AlertAudit() {
    }

    /** Sorts the messages of both sides into matched, missing, extra and differing. */
    public static AuditResult compare(AlertLog sent, AlertLog replay, ReplayCoverage coverage) {
        List<MessageKey> matched = new ArrayList<>();
        List<Finding> missing = new ArrayList<>();
        List<Finding> extra = new ArrayList<>();
        List<Finding> differing = new ArrayList<>();
        Map<MessageKey, JsonNode> sentMessages = sent.messages();
        Map<MessageKey, JsonNode> replayMessages = replay.messages();
        for (Map.Entry<MessageKey, JsonNode> e : replayMessages.entrySet()) {
            JsonNode live = sentMessages.get(e.getKey());
            if (live == null) {
                Map.Entry<MessageKey, JsonNode> partner = partner(e.getKey(), e.getValue(), sentMessages);
                missing.add(new Finding(e.getKey(), e.getValue(), List.of(),
                        partner == null ? List.of(Reason.UNKNOWN) : reasons(partner.getValue(), e.getValue()),
                        partner == null ? null : partner.getKey()));
                continue;
            }
            List<FieldDifference> fields = differences(live, e.getValue());
            if (fields.isEmpty()) {
                matched.add(e.getKey());
            } else {
                differing.add(new Finding(e.getKey(), e.getValue(), fields, reasons(live, e.getValue()), null));
            }
        }
        for (Map.Entry<MessageKey, JsonNode> e : sentMessages.entrySet()) {
            if (!replayMessages.containsKey(e.getKey())) {
                JsonNode live = e.getValue();
                String outside = coverage == null ? null : coverage.outside(live.path("stream").asText(),
                        instant(live.path("windowStart")), e.getKey().windowEnd());
                Map.Entry<MessageKey, JsonNode> partner = outside != null ? null : partner(e.getKey(), live, replayMessages);
                List<Reason> reasons = outside != null ? List.of(new Reason("outside-replay", outside))
                        : partner == null ? List.of(Reason.UNKNOWN) : reasons(live, partner.getValue());
                extra.add(new Finding(e.getKey(), live, List.of(), reasons, partner == null ? null : partner.getKey()));
            }
        }
        matched.sort(Comparator.naturalOrder());
        for (List<Finding> group : List.of(missing, extra, differing)) {
            group.sort(Comparator.comparing(Finding::key));
        }
        List<String> problems = new ArrayList<>(sent.problems());
        problems.addAll(replay.problems());
        return new AuditResult(matched, missing, extra, differing, problems);
    }

    /** The fields (dotted paths) whose values differ, in the replay message's field order. */
    static List<FieldDifference> differences(JsonNode sent, JsonNode replay) {
        Map<String, JsonNode> a = comparable(sent);
        Map<String, JsonNode> b = comparable(replay);
        Set<String> fields = new LinkedHashSet<>(b.keySet());
        fields.addAll(a.keySet());
        List<FieldDifference> out = new ArrayList<>();
        for (String field : fields) {
            if (!same(a.get(field), b.get(field))) {
                out.add(new FieldDifference(field, a.get(field), b.get(field)));
            }
        }
        return out;
    }

    private static Map<String, JsonNode> comparable(JsonNode alert) {
        Map<String, JsonNode> leaves = new LinkedHashMap<>();
        flatten("", alert, leaves);
        leaves.remove("replayCommand");
        JsonNode message = leaves.get("message");
        if (message != null && message.isTextual()) {
            leaves.put("message", new TextNode(
                    withoutCommand(message.asText(), alert.path("replayCommand").asText(""))));
        }
        return leaves;
    }

    private static void flatten(String prefix, JsonNode node, Map<String, JsonNode> out) {
        if (node.isObject()) {
            node.fields().forEachRemaining(f -> flatten(prefix.isEmpty() ? f.getKey() : prefix + "." + f.getKey(),
                    f.getValue(), out));
        } else if (!node.isNull()) {
            out.put(prefix, node);
        }
    }

    private static String withoutCommand(String message, String command) {
        int at = message.indexOf(REPRODUCE + command + ".");
        return at < 0 ? message : message.substring(0, at) + message.substring(at + REPRODUCE.length() + command.length() + 1);
    }

    private static boolean same(JsonNode a, JsonNode b) {
        if (a == null || b == null) {
            return a == b;
        }
        if (a.isNumber() && b.isNumber()) {
            return Double.compare(a.doubleValue(), b.doubleValue()) == 0;
        }
        return a.equals(b);
    }

    /**
     * The other side's message of the same window and episode, or else of the same stream, rule,
     * subject and window; null when there is none.
     */
    private static Map.Entry<MessageKey, JsonNode> partner(MessageKey key, JsonNode alert, Map<MessageKey, JsonNode> other) {
        Map.Entry<MessageKey, JsonNode> sameEpisode = null;
        Map.Entry<MessageKey, JsonNode> sameSubject = null;
        for (Map.Entry<MessageKey, JsonNode> e : other.entrySet()) {
            if (!e.getKey().windowEnd().equals(key.windowEnd())) {
                continue;
            }
            if (e.getKey().id().equals(key.id())) {
                sameEpisode = sameEpisode == null ? e : sameEpisode;
            } else if (sameSubject == null && List.of("stream", "rule", "subject").stream()
                    .allMatch(f -> alert.path(f).equals(e.getValue().path(f)))) {
                sameSubject = e;
            }
        }
        return sameEpisode != null ? sameEpisode : sameSubject;
    }

    /** The reasons the two messages of one window show; {@link Reason#UNKNOWN} when none. */
    static List<Reason> reasons(JsonNode sent, JsonNode replay) {
        List<Reason> out = new ArrayList<>();
        for (String limit : List.of("limit", "clearLimit")) {
            if (!same(number(sent, limit), number(replay, limit))) {
                out.add(new Reason("definition", limit + " sent " + text(sent.get(limit)) + ", replay "
                        + text(replay.get(limit)) + ": the rule settings of the definitions differ"));
            }
        }
        String sentBaseline = baselineText(sent);
        String replayBaseline = baselineText(replay);
        String sentChecksum = checksum(sentBaseline);
        String replayChecksum = checksum(replayBaseline);
        if (sentChecksum != null && replayChecksum != null && !sentChecksum.equals(replayChecksum)) {
            out.add(new Reason("definition", "the baselines were fitted under other definitions (checksum sent "
                    + sentChecksum + ", replay " + replayChecksum + ")"));
        } else if (sentBaseline != null && replayBaseline != null && !sentBaseline.equals(replayBaseline)) {
            out.add(new Reason("baseline", "baseline sent: " + sentBaseline + "; replay: " + replayBaseline));
        } else if (!same(number(sent, "baseline"), number(replay, "baseline"))) {
            out.add(new Reason("baseline", "baseline value sent " + text(sent.get("baseline")) + ", replay "
                    + text(replay.get("baseline"))));
        }
        JsonNode sentEvents = sent.get("events");
        JsonNode replayEvents = replay.get("events");
        if (sentEvents != null && replayEvents != null && sentEvents.isNumber() && replayEvents.isNumber()) {
            long live = sentEvents.asLong();
            long later = replayEvents.asLong();
            if (later > live) {
                out.add(new Reason("late-records", "the replay's window holds " + later + " events, the sent message's "
                        + live + ": records arrived after the live decision"));
            } else if (later < live) {
                out.add(new Reason("replay-input", "the replay's window holds " + later + " events, the sent message's "
                        + live + ": the replay's input lacks records the live service read"));
            }
        }
        return out.isEmpty() ? List.of(Reason.UNKNOWN) : out;
    }

    private static JsonNode number(JsonNode alert, String field) {
        JsonNode n = alert.get(field);
        return n == null || n.isNull() ? null : n;
    }

    private static String text(JsonNode n) {
        return n == null || n.isNull() ? "absent" : n.asText();
    }

    /** The "Baseline: ..." sentence of an alert's message, without its label, or null. */
    private static String baselineText(JsonNode alert) {
        String message = alert.path("message").asText("");
        int start = message.indexOf(BASELINE);
        int end = message.indexOf("." + REPRODUCE, start + 1);
        return start < 0 || end < 0 ? null : message.substring(start + BASELINE.length(), end);
    }

    private static String checksum(String baseline) {
        if (baseline == null) {
            return null;
        }
        Matcher m = CHECKSUM.matcher(baseline);
        return m.find() ? m.group(1) : null;
    }

    private static Instant instant(JsonNode node) {
        try {
            return node.isTextual() ? Instant.parse(node.asText()) : null;
        } catch (DateTimeParseException e) {
            return null;
        }
    }
}
