package org.oddswatch.ingest.pipeline;

import java.nio.charset.StandardCharsets;
import java.util.Base64;
import org.oddswatch.ingest.decode.Unicode;

/**
 * A rejected or late record, as sent to the rejects topic or file.
 *
 * @param monitor the monitor that rejected it, or null when no monitor could read it (malformed,
 *     oversized, too deep: parsing comes before routing)
 * @param stream the stream it was routed to, or null when routing did not happen
 * @param outcome {@link Outcome#REJECTED} or {@link Outcome#LATE}
 * @param value the original record bytes (never modified)
 */
public record RejectedRecord(String monitor, String stream, Outcome outcome, String reason, String detail,
                             RecordOrigin origin, byte[] value) {

    /** The JSON layout of a reject: field names are fixed. */
    public record Json(String monitor, String stream, Outcome outcome, String reason, String detail, String topic,
                       Integer partition, Long offset, Long line, String value, String valueBase64) {
    }

    /**
     * The JSON view: reason, detail, source topic/partition/offset or line, the original bytes as
     * base64 and, when they are valid UTF-8, as text. Unpaired surrogates in the texts (a detail may
     * quote one) become U+FFFD, so that every reject can be written.
     */
    public Json toJson() {
        return new Json(Unicode.wellFormed(monitor), Unicode.wellFormed(stream), outcome, reason,
                Unicode.wellFormed(detail), origin.topic(),
                origin.partition() < 0 ? null : origin.partition(), origin.offset() < 0 ? null : origin.offset(),
                origin.lineNumber() < 0 ? null : origin.lineNumber(),
                value == null || Unicode.firstInvalidUtf8(value, 0, value.length) >= 0 ? null
                        : new String(value, StandardCharsets.UTF_8),
                value == null ? null : Base64.getEncoder().encodeToString(value));
    }
}
