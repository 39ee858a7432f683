package org.oddswatch.ingest.decode;

import java.nio.charset.StandardCharsets;

/**
 * The fast path of {@link RecordScanner}: a hand-written single pass over the bytes for the common,
 * plain record — ASCII only, no escapes in strings, short names and numbers, nesting well inside the
 * cap. It checks the JSON grammar (RFC 8259) as it goes and fills the slots of the pointers it meets.
 * It is deliberately conservative: it answers "done" only for a well-formed single object that the
 * Jackson parser would accept too, and "not sure" for anything else (broken, unusual or merely
 * outside the plain subset), after which the caller reads the record the full way. So it never
 * decides a rejection and never changes one. Not thread-safe.
 */
final class AsciiScanner {

    /** Longest member name and number token read here (Jackson's own limits are far higher). */
    private static final int MAX_NAME = 1000;
    private static final int MAX_NUMBER = 100;
    /** Deepest nesting read here (recursion), whatever the cap. */
    private static final int MAX_DEPTH = 256;

    private final PointerTrie trie;
    private final FieldValues values;
    private final int depthLimit;
    private final TextCache texts;
    private byte[] b;
    private int n;
    private int pos;
    private int depth;

    /**
     * @param maxDepth the configured nesting cap; records nesting this deep or deeper are left to
     *     the full path (which decides too-deep)
     */
    AsciiScanner(PointerTrie trie, FieldValues values, int maxDepth) {
        this.trie = trie;
        this.values = values;
        this.depthLimit = Math.min(maxDepth, MAX_DEPTH);
        this.texts = new TextCache(trie.size());
    }

    /** True when the record was read completely (values filled); false when the full path must decide. */
    boolean scan(byte[] bytes) {
        b = bytes;
        n = bytes.length;
        pos = 0;
        depth = 0;
        try {
            skipWhitespace();
            if (peek() != '{') {
                return false;
            }
            PointerTrie.Node root = trie.root();
            if (root.slot >= 0) {
                values.kinds[root.slot] = FieldValues.OBJECT;
            }
            if (!object(root)) {
                return false;
            }
            skipWhitespace();
            return pos == n;
        } finally {
            b = null;
        }
    }

    private int peek() {
        return pos < n ? b[pos] : -1;
    }

    private void skipWhitespace() {
        while (pos < n) {
            byte c = b[pos];
            if (c != ' ' && c != '\n' && c != '\r' && c != '\t') {
                return;
            }
            pos++;
        }
    }

    /** At '{'; node is null when nothing below is wanted. */
    private boolean object(PointerTrie.Node node) {
        if (++depth >= depthLimit) {
            return false;
        }
        pos++;
        skipWhitespace();
        if (peek() == '}') {
            pos++;
            depth--;
            return true;
        }
        boolean lookUp = node != null && node.hasMembers();
        while (true) {
            if (peek() != '"') {
                return false;
            }
            int start = pos + 1;
            int end = stringEnd(start);
            if (end < 0 || end - start > MAX_NAME) {
                return false;
            }
            pos = end + 1;
            skipWhitespace();
            if (peek() != ':') {
                return false;
            }
            pos++;
            skipWhitespace();
            PointerTrie.Node child = lookUp ? node.member(b, start, end) : null;
            if (child != null) {
                for (int slot : child.subtreeSlots) {
                    values.clear(slot); // a later duplicate member replaces an earlier one
                }
            }
            if (!value(child)) {
                return false;
            }
            int next = afterValue('}');
            if (next != MORE) {
                return next == CLOSED;
            }
        }
    }

    /** At '['. */
    private boolean array(PointerTrie.Node node) {
        if (++depth >= depthLimit) {
            return false;
        }
        pos++;
        skipWhitespace();
        if (peek() == ']') {
            pos++;
            depth--;
            return true;
        }
        boolean lookUp = node != null && node.hasElements();
        int index = 0;
        while (true) {
            PointerTrie.Node child = lookUp ? node.element(index) : null;
            index++;
            if (!value(child)) {
                return false;
            }
            int next = afterValue(']');
            if (next != MORE) {
                return next == CLOSED;
            }
        }
    }

    private static final int MORE = 0;
    private static final int CLOSED = 1;
    private static final int BROKEN = 2;

    /** After a member or element: ',' (MORE), the closing bracket (CLOSED) or anything else (BROKEN). */
    private int afterValue(char close) {
        skipWhitespace();
        int c = peek();
        if (c == ',') {
            pos++;
            skipWhitespace();
            return MORE;
        }
        if (c == close) {
            pos++;
            depth--;
            return CLOSED;
        }
        return BROKEN;
    }

    private boolean value(PointerTrie.Node node) {
        int slot = node == null ? -1 : node.slot;
        int c = peek();
        switch (c) {
            case '{':
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.OBJECT;
                }
                return object(node);
            case '[':
                if (slot >= 0) {
                    values.kinds[slot] = FieldValues.ARRAY;
                }
                return array(node);
            case '"': {
                int start = pos + 1;
                int end = stringEnd(start);
                if (end < 0) {
                    return false;
                }
                if (slot >= 0) {
                    values.setText(slot, texts.text(slot, b, start, end));
                }
                pos = end + 1;
                return true;
            }
            case 't':
                return literal("true", slot, FieldValues.TRUE);
            case 'f':
                return literal("false", slot, FieldValues.FALSE);
            case 'n':
                return literal("null", slot, FieldValues.NULL);
            default:
                return (c == '-' || (c >= '0' && c <= '9')) && number(slot);
        }
    }

    /** The index of the closing quote of a plain string starting at {@code from}, or -1. */
    private int stringEnd(int from) {
        for (int i = from; i < n; i++) {
            byte c = b[i];
            if (c == '"') {
                return i;
            }
            if (c == '\\' || c < 0x20) { // escapes, control characters and (negative) non-ASCII bytes
                return -1;
            }
        }
        return -1;
    }

    private boolean literal(String word, int slot, byte kind) {
        int length = word.length();
        if (pos + length > n) {
            return false;
        }
        for (int i = 0; i < length; i++) {
            if (b[pos + i] != word.charAt(i)) {
                return false;
            }
        }
        pos += length;
        if (slot >= 0) {
            values.kinds[slot] = kind;
        }
        return true;
    }

    /** -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][+-]?[0-9]+)? ; whole numbers of up to 18 digits, or any float. */
    private boolean number(int slot) {
        int start = pos;
        boolean negative = peek() == '-';
        if (negative) {
            pos++;
        }
        int c = peek();
        if (c == '0') {
            pos++;
        } else if (c >= '1' && c <= '9') {
            skipDigits();
        } else {
            return false;
        }
        int intEnd = pos;
        boolean fraction = false;
        if (peek() == '.') {
            pos++;
            if (!digit(peek())) {
                return false;
            }
            skipDigits();
            fraction = true;
        }
        c = peek();
        if (c == 'e' || c == 'E') {
            pos++;
            c = peek();
            if (c == '+' || c == '-') {
                pos++;
            }
            if (!digit(peek())) {
                return false;
            }
            skipDigits();
            fraction = true;
        }
        if (pos - start > MAX_NUMBER) {
            return false;
        }
        if (slot < 0) {
            return true;
        }
        if (fraction) {
            values.setDouble(slot, Double.parseDouble(new String(b, start, pos - start, StandardCharsets.ISO_8859_1)),
                    null);
            return true;
        }
        int first = negative ? start + 1 : start;
        if (intEnd - first > 18) {
            return false; // long or BigInteger: left to the full path
        }
        long value = 0;
        for (int i = first; i < intEnd; i++) {
            value = value * 10 + (b[i] - '0');
        }
        values.setLong(slot, negative ? -value : value);
        return true;
    }

    private void skipDigits() {
        while (pos < n && digit(b[pos])) {
            pos++;
        }
    }

    private static boolean digit(int c) {
        return c >= '0' && c <= '9';
    }
}
