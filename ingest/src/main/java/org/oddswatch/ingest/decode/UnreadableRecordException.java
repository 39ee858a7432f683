package org.oddswatch.ingest.decode;

/**
 * A record that cannot be read: by no monitor ({@link RecordParser}: not one JSON object within the
 * record limits) or by one ({@link EventDecoder}). Bad input, not a defect: it carries no stack trace.
 */
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
