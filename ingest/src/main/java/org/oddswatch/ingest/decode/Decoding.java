package org.oddswatch.ingest.decode;

/** What decoding one record for one monitor gave: the event, or why it was rejected (exactly one is non-null). */
public record Decoding(DecodedEvent event, Rejection rejection) {

    public static Decoding of(DecodedEvent event) {
        return new Decoding(event, null);
    }

    public static Decoding rejected(String reason, String detail) {
        return new Decoding(null, new Rejection(reason, detail));
    }

    public boolean ok() {
        return rejection == null;
    }
}
