package org.oddswatch.ingest.pipeline;

/**
 * A record that at least one stream holds beyond its time horizon: its bytes and origin (for the
 * rejects output when a hold ends in a rejection) and the record-level outcome still being decided.
 * The record is counted in the pipeline's totals once, when no stream holds it any more (or at once
 * when another monitor accepted it).
 */
final class HeldRecord {

    final byte[] original;
    final RecordOrigin origin;
    /** Streams still holding the record. */
    int holders;
    /** The record-level outcome so far: accepted when any monitor accepted it, else the first one. */
    RecordOutcome best;
    /** True while the record's own {@code offer} call is still running. */
    boolean inOffer = true;
    boolean totalsCounted;

    HeldRecord(byte[] original, RecordOrigin origin) {
        this.original = original;
        this.origin = origin;
    }

    void merge(RecordOutcome outcome) {
        if (outcome != null && !outcome.held() && (best == null || (outcome.accepted() && !best.accepted()))) {
            best = outcome;
        }
    }

    /** True when the record-level outcome is known and not counted yet. */
    boolean decided() {
        return !totalsCounted && best != null && (best.accepted() || holders == 0);
    }
}
