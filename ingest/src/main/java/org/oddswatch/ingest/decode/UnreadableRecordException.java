package org.oddswatch.ingest.decode;

/** A record that cannot be read, by no monitor ({@link RecordParser}) or by one: bad input, so no stack trace. */
public final class UnreadableRecordException extends Exception {

    private final transient Rejection rejection;

    UnreadableRecordException(String reason, String detail) {
        super(reason + ": " + detail, null, false, false);
        this.rejection = new Rejection(reason, detail);
    }

    public Rejection rejection() {
        return rejection;
    }
}
