package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.JsonPointer;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * A set of JSON Pointers (RFC 6901) merged into a tree of their segments, so that one pass over a
 * record can find all of them. Every distinct pointer gets a slot number. A segment matches an
 * object member of that (unescaped: {@code ~1} is {@code /}, {@code ~0} is {@code ~}) name, and an
 * array element when it is a valid index ({@link JsonPointer#getMatchingIndex()}: digits without a
 * leading zero), exactly as {@link com.fasterxml.jackson.databind.JsonNode#at} resolves it.
 * Immutable after construction; shared by the threads that scan with it.
 */
final class PointerTrie {

    /** One segment position: its children by member name and by array index, and its slot (or -1). */
    static final class Node {
        /** This node's number, 0 for the root, below {@link PointerTrie#nodeCount()}. */
        final int id;
        final Map<String, Node> members = new HashMap<>();
        int[] indexes = new int[0];
        Node[] indexed = new Node[0];
        int slot = -1;
        /** The slots of this node and everything below it (cleared when a duplicate member replaces it). */
        int[] subtreeSlots;

        Node(int id) {
            this.id = id;
        }

        Node member(String name) {
            return members.isEmpty() ? null : members.get(name);
        }

        Node element(int index) {
            for (int i = 0; i < indexes.length; i++) {
                if (indexes[i] == index) {
                    return indexed[i];
                }
            }
            return null;
        }

        boolean hasMembers() {
            return !members.isEmpty();
        }

        boolean hasElements() {
            return indexes.length > 0;
        }
    }

    private int nodes;
    private final Node root = new Node(nodes++);
    private final Map<String, Integer> slots = new LinkedHashMap<>();

    PointerTrie(List<JsonPointer> pointers) {
        for (JsonPointer pointer : pointers) {
            add(pointer);
        }
        collect(root);
    }

    private void add(JsonPointer pointer) {
        String key = pointer.toString();
        if (slots.containsKey(key)) {
            return;
        }
        Node node = root;
        for (JsonPointer p = pointer; !p.matches(); p = p.tail()) {
            String name = p.getMatchingProperty();
            Node child = node.members.get(name);
            if (child == null) {
                child = new Node(nodes++);
                node.members.put(name, child);
                int index = p.getMatchingIndex();
                if (index >= 0) {
                    int n = node.indexes.length;
                    node.indexes = Arrays.copyOf(node.indexes, n + 1);
                    node.indexed = Arrays.copyOf(node.indexed, n + 1);
                    node.indexes[n] = index;
                    node.indexed[n] = child;
                }
            }
            node = child;
        }
        node.slot = slots.size();
        slots.put(key, node.slot);
    }

    private static List<Integer> collect(Node node) {
        List<Integer> below = new ArrayList<>();
        if (node.slot >= 0) {
            below.add(node.slot);
        }
        for (Node child : node.members.values()) {
            below.addAll(collect(child));
        }
        node.subtreeSlots = below.stream().mapToInt(Integer::intValue).toArray();
        return below;
    }

    Node root() {
        return root;
    }

    /** The number of nodes (root included). */
    int nodeCount() {
        return nodes;
    }

    int size() {
        return slots.size();
    }

    /** The slot of a pointer given to the constructor. */
    int slotOf(JsonPointer pointer) {
        Integer slot = slots.get(pointer.toString());
        if (slot == null) {
            throw new IllegalArgumentException("pointer " + pointer + " is not part of this set");
        }
        return slot;
    }
}
