package org.oddswatch.ingest.pipeline;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import org.oddswatch.ingest.decode.DecodedEvent;

/**
 * The records that streams hold beyond their time horizon ({@link FutureHold}), at record level: a
 * record held by several monitors' streams is counted in the totals once, when no stream holds it
 * any more, or at once when another monitor accepted it. Tracks the live records still held (the
 * service commits no offset past them) and the record outcomes decided since the last drain.
 */
final class HeldRecords {

    /** A held record: its bytes and origin (for rejects), its holders and its record-level outcome so far. */
    static final class Record {
        final byte[] original;
        final RecordOrigin origin;
        int holders;
        RecordOutcome best;
        boolean inOffer = true; // while the record's own offer runs
        boolean counted;

        Record(byte[] original, RecordOrigin origin) {
            this.original = original;
            this.origin = origin;
        }

        /** Merges one outcome; true when the record-level outcome is now known and not yet counted. */
        boolean merge(RecordOutcome outcome) {
            best = recordLevel(best, outcome);
            return !counted && best != null && (best.accepted() || holders == 0);
        }
    }

    /** The record-level outcome given one more monitor's: accepted when any accepted, else the first decided. */
    static RecordOutcome recordLevel(RecordOutcome sofar, RecordOutcome outcome) {
        if (outcome == null || outcome.held()) {
            return sofar;
        }
        return sofar == null || outcome.accepted() && !sofar.accepted() ? outcome : sofar;
    }

    private Record current; // the record being offered, once a stream holds it
    /** Live (not re-read) records some stream still holds. */
    final Set<Record> live = new LinkedHashSet<>();
    /** Record outcomes decided since the last drain, not suppressed. */
    final List<RecordOutcome> decided = new ArrayList<>();

    /** A new record is offered (nothing of an offer that failed half-way is carried over). */
    void beginOffer() {
        current = null;
    }

    /** A stream holds {@code event} of the record being offered. */
    void hold(StreamState stream, DecodedEvent event, byte[] original, RecordOrigin origin, boolean suppress) {
        if (current == null) {
            current = new Record(original, origin);
        }
        current.holders++;
        stream.hold(event, current, suppress);
    }

    /**
     * Ends the offer of a record: the record-level outcome to count now, given {@code overall} of the
     * monitors that did not hold it (or null), or {@link RecordOutcome#HELD} when holding streams decide later.
     */
    RecordOutcome endOffer(RecordOutcome overall, boolean suppress) {
        Record record = current;
        current = null;
        if (record == null) {
            return overall;
        }
        record.inOffer = false;
        if (!suppress && record.holders > 0) {
            live.add(record);
        }
        if (!record.merge(overall)) {
            return RecordOutcome.HELD;
        }
        record.counted = true;
        return record.best;
    }

    /**
     * One stream decided its held event of {@code record}: the record-level outcome to count now, or
     * null when other streams still hold the record, its offer is running, or it was counted.
     */
    RecordOutcome resolved(Record record, RecordOutcome outcome, boolean suppress) {
        if (--record.holders == 0) {
            live.remove(record);
        }
        if (!record.merge(outcome) || record.inOffer) {
            return null;
        }
        record.counted = true;
        if (!suppress) {
            decided.add(record.best);
        }
        return record.best;
    }
}
