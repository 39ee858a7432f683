package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.databind.JsonNode;
import java.util.Objects;

/**
 * One readable record as the monitors of an input see it: either the values a {@link RecordScanner}
 * found in one pass over the bytes, or a JSON tree (a CSV row, or a record the scanner handed to the
 * tree parser). {@link EventDecoder#decode(EventRecord)} gives the same result for both forms of the
 * same record. A scanned record is reused by its scanner: it is valid until the next scan.
 */
public final class EventRecord {

    private final JsonNode tree;
    private final FieldValues values;
    private final PointerTrie layout;

    private EventRecord(JsonNode tree, FieldValues values, PointerTrie layout) {
        this.tree = tree;
        this.values = values;
        this.layout = layout;
    }

    /** A record given as a tree. */
    public static EventRecord of(JsonNode tree) {
        return new EventRecord(Objects.requireNonNull(tree, "tree"), null, null);
    }

    static EventRecord scanned(FieldValues values, PointerTrie layout) {
        return new EventRecord(null, values, layout);
    }

    /** The tree, or null for a scanned record. */
    public JsonNode tree() {
        return tree;
    }

    FieldValues values() {
        return values;
    }

    PointerTrie layout() {
        return layout;
    }
}
