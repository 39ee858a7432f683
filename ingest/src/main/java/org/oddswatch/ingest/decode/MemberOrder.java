package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.io.SerializedString;

/**
 * The member names met at each position of each object of the last records a scanner read, and the
 * trie node each name leads to (or none, for a member no pointer reads). Records of one feed mostly
 * repeat their layout, so the scanner can ask the parser whether the next name is the one met at
 * this position before ({@link com.fasterxml.jackson.core.JsonParser#nextFieldName(
 * com.fasterxml.jackson.core.SerializableString)}, a comparison of the raw bytes) instead of having
 * it look the name up and then looking the name up in the trie. Only a shortcut: a name that does
 * not match is read and looked up as usual and then remembered for its position. Positions from
 * {@link #POSITIONS} on are not remembered. Not thread-safe: one per scanner.
 */
final class MemberOrder {

    /** Positions remembered per object (members after these are looked up every time). */
    static final int POSITIONS = 32;

    private final SerializedString[][] names;
    private final PointerTrie.Node[][] children;

    MemberOrder(PointerTrie trie) {
        names = new SerializedString[trie.nodeCount()][];
        children = new PointerTrie.Node[trie.nodeCount()][];
    }

    /** The name met last at {@code position} of an object at {@code node}, or null. */
    SerializedString expected(PointerTrie.Node node, int position) {
        SerializedString[] known = names[node.id];
        return known == null || position >= known.length ? null : known[position];
    }

    /** The node the name {@link #expected} gives leads to (null: a member no pointer reads). */
    PointerTrie.Node child(PointerTrie.Node node, int position) {
        return children[node.id][position];
    }

    /** Remembers that {@code name}, leading to {@code child}, was met at {@code position}. */
    void remember(PointerTrie.Node node, int position, String name, PointerTrie.Node child) {
        if (position >= POSITIONS) {
            return;
        }
        SerializedString[] known = names[node.id];
        if (known == null || known.length <= position) {
            int length = Math.min(POSITIONS, Math.max(position + 1, known == null ? 8 : 2 * known.length));
            known = java.util.Arrays.copyOf(known == null ? new SerializedString[0] : known, length);
            names[node.id] = known;
            children[node.id] = java.util.Arrays.copyOf(
                    children[node.id] == null ? new PointerTrie.Node[0] : children[node.id], length);
        }
        known[position] = new SerializedString(name);
        children[node.id][position] = child;
    }
}
