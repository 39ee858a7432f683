package org.oddswatch.deploy.audit;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.List;

/**
 * The outcome of an audit: the sent messages and the replay's sorted into four groups, plus the lines
 * that could not be compared. Each group is in {@link MessageKey} order.
 *
 * @param matched keys present on both sides with the same content
 * @param missing in the replay, not sent
 * @param extra sent, not in the replay
 * @param differing the same key on both sides with other content
 * @param problems lines of either side that could not be compared ({@code source:line: reason})
 */
public record AuditResult(List<MessageKey> matched, List<Finding> missing, List<Finding> extra,
                          List<Finding> differing, List<String> problems) {

    /**
     * One message that did not match.
     *
     * @param key its key
     * @param alert the message (the replay's for missing and differing, the sent one for extra)
     * @param fields for differing: the fields whose values differ
     * @param reasons the likely reasons; one {@link Reason#UNKNOWN} when the data tells none
     * @param counterpart for missing and extra: the other side's message its reasons were read against
     *     (the same window of the same episode, or of the same stream, rule and subject), or null
     */
    public record Finding(MessageKey key, JsonNode alert, List<FieldDifference> fields, List<Reason> reasons,
                          MessageKey counterpart) {
    }

    /** A field (a dotted path such as {@code evidence.z}) with its sent and replay values (null: absent). */
    public record FieldDifference(String field, JsonNode sent, JsonNode replay) {
    }

    /**
     * A likely reason: {@code code} one of {@code definition}, {@code baseline}, {@code late-records},
     * {@code replay-input}, {@code outside-replay}, {@code unknown}; {@code detail} says what in the
     * data shows it.
     */
    public record Reason(String code, String detail) {

        static final Reason UNKNOWN = new Reason("unknown", "the alerts do not tell");
    }

    /** True when nothing is missing, extra or differing and every line was compared. */
    public boolean agree() {
        return missing.isEmpty() && extra.isEmpty() && differing.isEmpty() && problems.isEmpty();
    }
}
