package org.oddswatch.ingest.pipeline;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.function.Consumer;
import org.oddswatch.ingest.decode.DecodedEvent;

/**
 * The record-level bookkeeping of records that streams hold beyond their time horizon: the record
 * being offered when a stream holds it (shared by the monitors of the input), the live records still
 * held (the service commits no offset past them), and the record-level outcomes decided since the
 * last {@link #drainDecided}. A held record is counted in the pipeline's totals once: when no
 * stream holds it any more, or at once when another monitor accepted it.
 */
final class HeldRecords {

    /** The record being offered, once a stream holds it; else null. */
    private HeldRecord current;
    /** Live (not re-read) records some stream still holds. */
    private final Set<HeldRecord> live = new LinkedHashSet<>();
    private final List<RecordOutcome> decided = new ArrayList<>();

    /** A new record is offered (nothing of an offer that failed half-way is carried over). */
    void beginOffer() {
        current = null;
    }

    /** A stream holds {@code event} of the record being offered. */
    void hold(StreamState stream, DecodedEvent event, byte[] original, RecordOrigin origin, boolean suppress) {
        if (current == null) {
            current = new HeldRecord(original, origin);
        }
        current.holders++;
        stream.hold(event, current, suppress);
    }

    /**
     * Ends the offer of a record: the record-level outcome to count now ({@code overall} when no
     * stream held the record), or {@link RecordOutcome#HELD} when holding streams decide it later.
     *
     * @param overall the best outcome of the monitors that did not hold the record, or null
     */
    RecordOutcome endOffer(RecordOutcome overall, boolean suppress) {
        HeldRecord held = current;
        current = null;
        if (held == null) {
            return overall;
        }
        held.inOffer = false;
        held.merge(overall);
        if (!suppress && held.holders > 0) {
            live.add(held);
        }
        if (!held.decided()) {
            return RecordOutcome.HELD;
        }
        held.totalsCounted = true;
        return held.best;
    }

    /**
     * One stream decided its held event of {@code record}: the record-level outcome to count in the
     * totals now, or null when other streams still hold the record (or it was counted already).
     */
    RecordOutcome resolved(HeldRecord record, RecordOutcome outcome, boolean suppress) {
        record.holders--;
        if (record.holders == 0) {
            live.remove(record);
        }
        record.merge(outcome);
        if (record.inOffer || !record.decided()) {
            return null;
        }
        record.totalsCounted = true;
        if (!suppress) {
            decided.add(record.best);
        }
        return record.best;
    }

    /** The smallest source offset of a live held record, or {@link Long#MAX_VALUE} when none is held. */
    long oldestLiveOffset() {
        long oldest = Long.MAX_VALUE;
        for (HeldRecord record : live) {
            oldest = Math.min(oldest, record.origin.offset());
        }
        return oldest;
    }

    /** Hands over (and forgets) the record-level outcomes decided since the last call, not suppressed. */
    void drainDecided(Consumer<RecordOutcome> into) {
        if (!decided.isEmpty()) {
            decided.forEach(into);
            decided.clear();
        }
    }
}
