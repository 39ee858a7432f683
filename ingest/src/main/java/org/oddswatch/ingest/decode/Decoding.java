package org.oddswatch.ingest.decode;

/** What decoding one record for one monitor gave: the event, or why it was rejected (exactly one is non-null). */
public record Decoding(DecodedEvent event, Rejection rejection) {

    public boolean ok() {
        return rejection == null;
    }
}
