package org.oddswatch.ingest.pipeline;

import org.oddswatch.ingest.decode.RejectReason;

/**
 * What happened to one record.
 *
 * @param outcome the counted outcome, or null for {@link #HELD}
 * @param reason null for accepted records; a {@link RejectReason} code for rejected ones;
 *     {@code late} or {@code duplicate} otherwise
 * @param detail a readable explanation, or null
 */
public record RecordOutcome(Outcome outcome, String reason, String detail) {

    public static final RecordOutcome ACCEPTED = new RecordOutcome(Outcome.ACCEPTED, null, null);

    /**
     * Not decided yet: the streams that received the record hold it beyond their time horizon. Not
     * counted; the decided outcome follows ({@link MonitorPipeline#drainDecidedHeld}).
     */
    public static final RecordOutcome HELD = new RecordOutcome(null, "held",
            "held beyond the time horizon until the stream's events confirm or dismiss it");

    public static RecordOutcome rejected(String reason, String detail) {
        return new RecordOutcome(Outcome.REJECTED, reason, detail);
    }

    public static RecordOutcome late(String detail) {
        return new RecordOutcome(Outcome.LATE, RejectReason.LATE, detail);
    }

    public static RecordOutcome duplicate(String detail) {
        return new RecordOutcome(Outcome.DUPLICATE, RejectReason.DUPLICATE, detail);
    }

    public boolean held() {
        return outcome == null;
    }

    public boolean accepted() {
        return outcome == Outcome.ACCEPTED;
    }
}
