package org.oddswatch.ingest.pipeline;

import java.util.HashMap;

/**
 * The ids of the events one stream's window store still holds, so that an id seen again while held
 * is a duplicate. An id added in {@code bucket} is tagged {@code max(bucket, floor)} and held while
 * its tag is at least the floor; raising the floor is O(1). Expired ids are purged once the map
 * has doubled since the last purge, so it keeps at most {@code max(16, 2h)} entries, {@code h} the
 * ids held at the last purge. Not thread-safe; ids must not be null.
 */
final class DedupeWindow {

    private static final int MIN_PURGE = 16;

    private HashMap<String, Long> tags = new HashMap<>();
    private long floor = Long.MIN_VALUE;
    private int purgeAbove = MIN_PURGE;
    /** The last tag boxed, shared by the ids of one bucket (no allocation per add within a bucket). */
    private Long lastTag = Long.MIN_VALUE;

    /** Holds {@code id} in {@code bucket}; false for a duplicate (the id is held already). */
    boolean add(String id, long bucket) {
        long tag = Math.max(bucket, floor);
        if (lastTag != tag) {
            lastTag = tag;
        }
        Long old = tags.put(id, lastTag);
        if (old != null && old >= floor) {
            tags.put(id, old);
            return false;
        }
        if (tags.size() > purgeAbove) {
            HashMap<String, Long> held = new HashMap<>();
            tags.forEach((key, value) -> {
                if (value >= floor) {
                    held.put(key, value);
                }
            });
            tags = held;
            purgeAbove = Math.max(MIN_PURGE, 2 * held.size());
        }
        return true;
    }

    /** True when {@code id} is held. */
    boolean contains(String id) {
        Long tag = tags.get(id);
        return tag != null && tag >= floor;
    }

    /** Forgets {@code id} (undoes an add whose event could not be stored). */
    void remove(String id) {
        tags.remove(id);
    }

    /** Every id tagged below {@code bucket} counts as absent from now on; a lower value changes nothing. */
    void expireBefore(long bucket) {
        floor = Math.max(floor, bucket);
    }

    /** The ids kept in memory, held or expired but not yet purged. */
    int entries() {
        return tags.size();
    }
}
