package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.io.SerializedString;
import java.io.IOException;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.ingest.definition.MonitorDefinition;
import org.oddswatch.ingest.definition.RecordLimits;
import org.oddswatch.ingest.definition.TermSpec;

/**
 * Reads a record value once for all monitors of an input, without building a JSON tree: a
 * single Jackson streaming pass checks the whole value (well-formed, one object, nothing after it, nesting
 * within {@code maxDepth}) and keeps only the values at the JSON Pointers the monitors read (a
 * {@link PointerTrie}); other members are stepped over. Strings are still decoded (without making
 * Java strings) so that the checks are exactly those of {@link RecordParser}; the strings kept come
 * from a {@link TextCache}, so repeated values (outcomes, levels, split values) share one string
 * (declared outcomes and levels: the definition's own). Member names are first matched against the
 * name met at the same position of the record before ({@link MemberOrder}); event times of the
 * common RFC 3339 shape are read from the parser's characters ({@link FieldValues#times}).
 *
 * <p>Anything out of the ordinary — a record that is not an object, an error of any kind, trailing
 * content — is handed to {@link RecordParser}, so rejection reasons and detail texts stay exactly
 * those of the tree parser; such a record comes back as a tree (or a rejection). Duplicate members:
 * the last one wins, as in the tree. Not thread-safe (it reuses one set of values): one scanner per
 * pipeline thread.
 */
public final class RecordScanner {

    /** The outcome of a scan: a record, or a rejection. The record is valid until the next scan. */
    public record Scanned(EventRecord record, Rejection rejection) {
        public boolean ok() {
            return rejection == null;
        }
    }

    private final RecordLimits limits;
    private final RecordParser treeParser;
    private final JsonFactory factory;
    private final PointerTrie trie;
    private final FieldValues values;
    private final TextCache texts;
    private final MemberOrder order;
    /** Slots some monitor reads as its event time (read from the parser's characters). */
    private final boolean[] timeSlots;
    /** Slots of event ids: numbers there keep their text exactly ({@link FieldValues#setNumberText}). */
    private final boolean[] exactSlots;
    private final Scanned scanned;

    /** Which path read the last record (for tests). */
    enum Path { STREAMING, SHARED_PARSER, TREE }

    /** A scanner for the fields the given monitors read. */
    public RecordScanner(RecordLimits limits, List<MonitorDefinition> monitors) {
        this(limits, new PointerTrie(pointersOf(monitors)));
        for (MonitorDefinition monitor : monitors) {
            timeSlots[trie.slotOf(monitor.event().time())] = true;
            exactSlots[trie.slotOf(monitor.event().id())] = true;
            seed(monitor.event().outcome().field(), monitor.event().outcome().positive());
            seed(monitor.event().outcome().field(), monitor.event().outcome().negative());
            for (TermSpec term : monitor.terms()) {
                if (term.term() instanceof BinaryTerm binary) {
                    seed(term.field(), List.of(binary.level(), binary.reference()));
                } else if (term.term() instanceof CategoricalTerm categorical) {
                    seed(term.field(), categorical.levels());
                }
            }
        }
    }

    /**
     * Offers the declared values of a field to the text cache, so that a record's value comes back
     * as the definition's own string and later comparisons with it end at the identity check.
     */
    private void seed(JsonPointer field, List<String> declared) {
        int slot = trie.slotOf(field);
        for (String value : declared) {
            texts.seed(slot, value);
        }
    }

    /** A scanner for the given pointers (tests and tools). */
    static RecordScanner forPointers(RecordLimits limits, List<JsonPointer> pointers) {
        return new RecordScanner(limits, new PointerTrie(pointers));
    }

    private Path lastPath;

    private RecordScanner(RecordLimits limits, PointerTrie trie) {
        this.limits = limits;
        this.treeParser = new RecordParser(limits);
        // One thread at a time uses a scanner, so its parsers can share one set of plain buffers.
        this.factory = RecordParser.factory(limits, new ConfinedRecycler().pool);
        this.trie = trie;
        this.values = new FieldValues(trie.size());
        this.texts = new TextCache(trie.size());
        this.order = new MemberOrder(trie);
        this.timeSlots = new boolean[trie.size()];
        this.exactSlots = new boolean[trie.size()];
        this.scanned = new Scanned(EventRecord.scanned(values, trie), null);
    }

    private static List<JsonPointer> pointersOf(List<MonitorDefinition> monitors) {
        List<JsonPointer> pointers = new ArrayList<>();
        for (MonitorDefinition monitor : monitors) {
            pointers.addAll(EventDecoder.fieldsRead(monitor));
        }
        return pointers;
    }

    public Scanned scan(byte[] value) {
        if (value == null || value.length > limits.maxRecordBytes()
                || Unicode.firstInvalidUtf8(value, 0, value.length) >= 0) {
            return byTree(value);
        }
        values.reset();
        lastPath = Path.STREAMING;
        try (JsonParser parser = factory.createParser(value)) {
            if (parser.nextToken() != JsonToken.START_OBJECT) {
                return byTree(value);
            }
            readRootObject(parser);
            if (parser.nextToken() != null) {
                return byTree(value);
            }
        } catch (IOException | RuntimeException e) {
            return byTree(value);
        }
        return scanned;
    }

    /** Receives the scans of a batch in order; a scanned record is valid only during the call. */
    public interface ScanSink {
        void accept(int index, Scanned scanned);

        /**
         * Record {@code index} raised an error (a defect, not bad input); the batch goes on when
         * this returns. By default the error is thrown on, which ends the batch.
         */
        default void failed(int index, RuntimeException error) {
            throw error;
        }
    }

    /** The batch joined for {@link #scanAll}, reused; record {@code i} is {@code [starts[i], ends[i])}. */
    private byte[] joined = new byte[0];
    private int[] starts = new int[0];
    private int[] ends = new int[0];
    /** Per record of the batch: read with the shared parser (else on its own, by {@link #scan}). */
    private boolean[] joins = new boolean[0];

    /**
     * Scans a batch of record values in order, giving each to {@code sink}: the same results as
     * {@link #scan} record by record, with one parser for the whole batch instead of one per record
     * (setting a parser up costs about as much as reading a short record). The values are copied
     * one after the other, separated by a newline, and read as a sequence of JSON values. A record
     * is taken from that sequence only when its object begins and ends within its own bytes, with
     * nothing but whitespace around it, and nothing went wrong; any other record (not an object,
     * trailing content, a parse error, too large, absent) is handed to {@link #scan} on its own and
     * the shared parser starts again with the next record, so no record can affect another.
     */
    public void scanAll(List<byte[]> batch, ScanSink sink) {
        int n = batch.size();
        if (starts.length < n) {
            starts = new int[n];
            ends = new int[n];
            joins = new boolean[n];
        }
        long total = 0;
        for (int i = 0; i < n; i++) {
            byte[] value = batch.get(i);
            joins[i] = joinable(value);
            if (joins[i]) {
                total += value.length + 1;
            }
        }
        if (total > Integer.MAX_VALUE - 8) {
            for (int i = 0; i < n; i++) {
                sink.accept(i, scan(batch.get(i)));
            }
            return;
        }
        if (joined.length < total) {
            joined = new byte[(int) Math.max(total, Math.min(Integer.MAX_VALUE - 8, 2L * joined.length))];
        }
        int at = 0;
        for (int i = 0; i < n; i++) {
            byte[] value = batch.get(i);
            if (joins[i]) {
                System.arraycopy(value, 0, joined, at, value.length);
                starts[i] = at;
                ends[i] = at + value.length;
                at += value.length;
                joined[at++] = '\n';
            }
        }
        JsonParser parser = null;
        int base = 0;
        try {
            for (int i = 0; i < n; i++) {
                byte[] value = batch.get(i);
                try {
                    if (!joins[i]) {
                        sink.accept(i, scan(value));
                        continue;
                    }
                    if (parser == null) {
                        base = starts[i];
                        parser = factory.createParser(joined, base, at - base);
                    }
                    if (scanJoined(parser, base, ends[i])) {
                        sink.accept(i, scanned);
                    } else {
                        closeQuietly(parser);
                        parser = null;
                        sink.accept(i, scan(value));
                    }
                } catch (IOException | RuntimeException e) {
                    closeQuietly(parser);
                    parser = null;
                    sink.failed(i, e instanceof RuntimeException r ? r : new IllegalStateException(e));
                }
            }
        } finally {
            closeQuietly(parser);
        }
    }

    /** Not too large and well-formed UTF-8 (Jackson does not check all of UTF-8: see {@link Unicode}). */
    private boolean joinable(byte[] value) {
        return value != null && value.length <= limits.maxRecordBytes()
                && Unicode.firstInvalidUtf8(value, 0, value.length) < 0;
    }

    /**
     * Reads the next value of the shared parser (which reads {@code joined} from {@code base} on) as
     * the record that ends at {@code joined[end]}: true when it is one object ending within the
     * record, followed only by whitespace up to {@code end}; false (the parser is then unusable)
     * otherwise.
     */
    private boolean scanJoined(JsonParser parser, int base, int end) {
        values.reset();
        lastPath = Path.SHARED_PARSER;
        try {
            // The previous record ended in whitespace, so the next value begins at or after
            // start; one that begins after end (this record is blank) also ends after it.
            if (parser.nextToken() != JsonToken.START_OBJECT) {
                return false;
            }
            readRootObject(parser);
            long after = base + parser.currentLocation().getByteOffset();
            if (after > end) {
                return false;
            }
            for (int b = (int) after; b < end; b++) {
                byte c = joined[b];
                if (c != ' ' && c != '\t' && c != '\n' && c != '\r') {
                    return false;
                }
            }
            return true;
        } catch (IOException | RuntimeException e) {
            return false;
        }
    }

    private static void closeQuietly(JsonParser parser) {
        if (parser != null) {
            try {
                parser.close();
            } catch (IOException e) {
                // memory input: nothing to release
            }
        }
    }

    /** The slot layout of the records this scanner reads. */
    PointerTrie layout() {
        return trie;
    }

    Path lastPath() {
        return lastPath;
    }

    /** Member names so far that matched the name remembered for their position (for tests). */
    long namesMatched() {
        return namesMatched;
    }

    private long namesMatched;

    private Scanned byTree(byte[] value) {
        lastPath = Path.TREE;
        RecordParser.Parsed parsed = treeParser.parse(value);
        return parsed.ok() ? new Scanned(EventRecord.of(parsed.tree()), null) : new Scanned(null, parsed.rejection());
    }

    /** Reads the record's object, whose START_OBJECT is the current token. */
    private void readRootObject(JsonParser parser) throws IOException {
        PointerTrie.Node root = trie.root();
        if (root.slot >= 0) {
            values.kinds[root.slot] = FieldValues.OBJECT;
        }
        readObject(parser, root);
    }

    /**
     * Reads the members of an object whose START_OBJECT is the current token. Each name is first
     * matched against the one met at the same position before ({@link MemberOrder}); only a name
     * that differs is looked up in the trie.
     */
    private void readObject(JsonParser parser, PointerTrie.Node node) throws IOException {
        JsonToken token;
        for (int position = 0; ; position++) {
            SerializedString expected = order.expected(node, position);
            PointerTrie.Node child;
            if (expected != null && parser.nextFieldName(expected)) {
                child = order.child(node, position);
                namesMatched++;
            } else {
                token = expected == null ? parser.nextToken() : parser.currentToken();
                if (token != JsonToken.FIELD_NAME) {
                    if (token != JsonToken.END_OBJECT) {
                        throw new IOException("unexpected " + token + " in an object");
                    }
                    return;
                }
                String name = parser.currentName();
                child = node.member(name);
                order.remember(node, position, name, child);
            }
            token = parser.nextToken();
            if (child == null) {
                skip(parser, token);
            } else {
                for (int slot : child.subtreeSlots) {
                    values.clear(slot); // a later duplicate member replaces an earlier one
                }
                readValue(parser, token, child);
            }
        }
    }

    /** Reads the elements of an array whose START_ARRAY is the current token. */
    private void readArray(JsonParser parser, PointerTrie.Node node) throws IOException {
        JsonToken token;
        int index = 0;
        while ((token = parser.nextToken()) != JsonToken.END_ARRAY) {
            if (token == null) {
                throw new IOException("unexpected end of an array");
            }
            PointerTrie.Node child = node.element(index++);
            if (child == null) {
                skip(parser, token);
            } else {
                readValue(parser, token, child);
            }
        }
    }

    private void readValue(JsonParser parser, JsonToken token, PointerTrie.Node node) throws IOException {
        int slot = node.slot;
        switch (token) {
            case START_OBJECT -> {
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.OBJECT;
                }
                if (node.hasMembers()) {
                    readObject(parser, node);
                } else {
                    skip(parser, token);
                }
            }
            case START_ARRAY -> {
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.ARRAY;
                }
                if (node.hasElements()) {
                    readArray(parser, node);
                } else {
                    skip(parser, token);
                }
            }
            case VALUE_STRING -> {
                if (slot >= 0) {
                    char[] chars = parser.getTextCharacters();
                    int offset = parser.getTextOffset();
                    int length = parser.getTextLength();
                    long time = timeSlots[slot] ? Rfc3339.fast(chars, offset, length) : Long.MIN_VALUE;
                    if (time != Long.MIN_VALUE) {
                        values.setTimeText(slot, chars, offset, length, time); // no string unless asked for
                    } else {
                        values.setText(slot, texts.text(slot, chars, offset, length));
                    }
                } else {
                    parser.getTextLength();
                }
            }
            case VALUE_NUMBER_INT -> {
                if (slot >= 0) {
                    JsonParser.NumberType type = parser.getNumberType();
                    if (type == JsonParser.NumberType.BIG_INTEGER) {
                        values.setBig(slot, parser.getBigIntegerValue());
                    } else {
                        values.setLong(slot, parser.getLongValue());
                    }
                    if (exactSlots[slot]) {
                        values.setNumberText(slot, parser.getText());
                    }
                }
            }
            case VALUE_NUMBER_FLOAT -> {
                if (slot >= 0) {
                    values.setDouble(slot, parser.getDoubleValue(), exactSlots[slot] ? parser.getText() : null);
                }
            }
            case VALUE_TRUE -> {
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.TRUE;
                }
            }
            case VALUE_FALSE -> {
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.FALSE;
                }
            }
            case VALUE_NULL -> {
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.NULL;
                }
            }
            default -> throw new IOException("unexpected " + token);
        }
    }

    /**
     * Steps over the value starting at the current token. Strings are decoded into the parser's own
     * buffer (no Java string) so that their encoding is checked as the tree parser checks it.
     */
    private static void skip(JsonParser parser, JsonToken token) throws IOException {
        if (token == JsonToken.VALUE_STRING) {
            parser.getTextLength();
            return;
        }
        if (token != JsonToken.START_OBJECT && token != JsonToken.START_ARRAY) {
            if (token == null) {
                throw new IOException("unexpected end of input");
            }
            return;
        }
        int depth = 1;
        while (depth > 0) {
            JsonToken next = parser.nextToken();
            if (next == null) {
                throw new IOException("unexpected end of input");
            }
            switch (next) {
                case START_OBJECT, START_ARRAY -> depth++;
                case END_OBJECT, END_ARRAY -> depth--;
                case VALUE_STRING -> parser.getTextLength();
                default -> {
                }
            }
        }
    }
}
