package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.node.ObjectNode;

/** Receives the records of an event file, in file order. */
public interface RecordSink {

    /** One JSON Lines record: the line's bytes (without the line break). */
    void json(byte[] value, long line);

    /** One CSV row as a JSON object of text values; {@code original} is the row's bytes. */
    void tree(ObjectNode row, byte[] original, long line);

    /** A record that could not be read (for instance a CSV row that does not fit the header). */
    void unreadable(byte[] original, long line, String reason, String detail);
}
