package org.oddswatch.ingest.pipeline;

/**
 * The dedupe window of one stream: the ids of the events its window store still holds, each tagged
 * with its bucket, so that an id seen again while held is a duplicate. An id is held if and only if
 * it was added with tag {@code max(bucket, floor at that time) >= floor}; raising the floor is O(1).
 * Ids are compared in full, so the answer is exact. Not thread-safe; ids must not be null.
 *
 * <p>Layout: open addressing with linear probing over parallel arrays (hash, tag, id); hash 0 marks
 * an empty slot (a real 0 is stored as 1); entries below the floor stay as tombstones. When used
 * slots would pass half the capacity, the table is rebuilt without tombstones at the smallest power
 * of two (at least 16) that is at most an eighth full, so rebuilds cost amortised O(1) per add.
 */
final class DedupeWindow {

    private static final int MIN_CAPACITY = 16;
    private static final int EMPTY = 0;
    private static final int ZERO_HASH_STAND_IN = 1;
    /** The tag of a removed entry: always below the floor (the floor starts one above it). */
    private static final long GONE = Long.MIN_VALUE;

    private int[] hashes;
    private long[] tags;
    private String[] ids;
    private int shift;
    private int used;
    private long floor = Long.MIN_VALUE + 1;

    DedupeWindow() {
        allocate(MIN_CAPACITY);
    }

    /**
     * Holds {@code id} in {@code bucket} unless it is held already.
     *
     * @return true when added (the id was absent or only below the floor), false for a duplicate
     */
    boolean add(String id, long bucket) {
        long tag = Math.max(bucket, floor);
        int hash = storedHash(id);
        int slot = probe(id, hash);
        if (slot >= 0) {
            if (tags[slot] >= floor) {
                return false;
            }
            tags[slot] = tag;
            return true;
        }
        slot = ~slot;
        if (used + 1 > hashes.length >>> 1) {
            rebuild();
            slot = ~probe(id, hash);
        }
        hashes[slot] = hash;
        tags[slot] = tag;
        ids[slot] = id;
        used++;
        return true;
    }

    /** True when {@code id} is held (added with a tag at or above the floor). */
    boolean contains(String id) {
        int slot = probe(id, storedHash(id));
        return slot >= 0 && tags[slot] >= floor;
    }

    /** Forgets {@code id} (undoes an add whose event could not be stored); no effect when absent. */
    void remove(String id) {
        int slot = probe(id, storedHash(id));
        if (slot >= 0) {
            tags[slot] = GONE;
        }
    }

    /** Every id with a tag below {@code bucket} counts as absent from now on; a lower value changes nothing. */
    void expireBefore(long bucket) {
        floor = Math.max(floor, bucket);
    }

    /** The number of held ids (a full scan: for rebuilds and tests, not per event). */
    int size() {
        int held = 0;
        for (int slot = 0; slot < hashes.length; slot++) {
            if (hashes[slot] != EMPTY && tags[slot] >= floor) {
                held++;
            }
        }
        return held;
    }

    /** The number of slots (a power of two). */
    int capacity() {
        return hashes.length;
    }

    /**
     * The slot holding {@code id} (held or tombstone), or {@code ~slot} of the empty slot that ends
     * its probe sequence when absent.
     */
    private int probe(String id, int hash) {
        int mask = hashes.length - 1;
        int slot = indexOf(hash);
        int h;
        while ((h = hashes[slot]) != EMPTY) {
            if (h == hash && id.equals(ids[slot])) {
                return slot;
            }
            slot = (slot + 1) & mask;
        }
        return ~slot;
    }

    /** Rebuilds without tombstones, sized so that the held ids fill at most an eighth of the slots. */
    private void rebuild() {
        int[] oldHashes = hashes;
        long[] oldTags = tags;
        String[] oldIds = ids;
        int held = size();
        long needed = 8L * (held + 1);
        int capacity = MIN_CAPACITY;
        while (capacity < needed) {
            if (capacity >= 1 << 30) {
                throw new IllegalStateException("too many held event ids: " + held);
            }
            capacity <<= 1;
        }
        allocate(capacity);
        for (int slot = 0; slot < oldHashes.length; slot++) {
            int hash = oldHashes[slot];
            if (hash != EMPTY && oldTags[slot] >= floor) {
                int target = ~probe(oldIds[slot], hash);
                hashes[target] = hash;
                tags[target] = oldTags[slot];
                ids[target] = oldIds[slot];
            }
        }
        used = held;
    }

    private void allocate(int capacity) {
        hashes = new int[capacity];
        tags = new long[capacity];
        ids = new String[capacity];
        shift = Integer.numberOfLeadingZeros(capacity) + 1;
    }

    /** Fibonacci hashing: the top bits of the hash times 2^32/phi. */
    private int indexOf(int hash) {
        return (hash * 0x9E3779B9) >>> shift;
    }

    private static int storedHash(String id) {
        int h = id.hashCode();
        return h == EMPTY ? ZERO_HASH_STAND_IN : h;
    }
}
