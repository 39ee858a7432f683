package org.oddswatch.ingest.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.Set;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;

class DedupeWindowTest {

    @Test
    void anIdHeldInAnyBucketAtOrAboveTheFloorIsADuplicate() {
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("clinic-7/0001", 5));
        assertFalse(held.add("clinic-7/0001", 5));
        assertFalse(held.add("clinic-7/0001", 9), "a later bucket does not make it new");
        assertFalse(held.add("clinic-7/0001", 2), "nor does an earlier one");
        assertTrue(held.add("clinic-7/0002", 5));
        held.expireBefore(5);
        assertTrue(held.contains("clinic-7/0001"), "bucket 5 is not below floor 5");
        assertFalse(held.add("clinic-7/0001", 6));
        assertTrue(held.contains("clinic-7/0002"));
        assertFalse(held.contains("clinic-7/0003"));
    }

    @Test
    void anIdWhoseBucketExpiredIsAcceptedAgainAndThenHeldInItsNewBucket() {
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("a", 3));
        assertTrue(held.add("b", 4));
        held.expireBefore(4);
        assertFalse(held.contains("a"));
        assertTrue(held.contains("b"));
        assertTrue(held.add("a", 10), "gone with bucket 3, so new again");
        assertFalse(held.add("a", 10));
        held.expireBefore(5);
        assertTrue(held.contains("a"), "now tagged with bucket 10, it survives floor 5");
        assertFalse(held.contains("b"));
        held.expireBefore(11);
        assertFalse(held.contains("a"));
        assertFalse(held.contains("b"));
    }

    @Test
    void anIdAddedBelowTheFloorIsHeldUntilTheFloorNextRises() {
        DedupeWindow held = new DedupeWindow();
        held.expireBefore(100);
        assertTrue(held.add("late-but-accepted", 40));
        assertFalse(held.add("late-but-accepted", 40));
        held.expireBefore(100);
        assertTrue(held.contains("late-but-accepted"), "the same floor again changes nothing");
        held.expireBefore(101);
        assertFalse(held.contains("late-but-accepted"));
    }

    @Test
    void aLowerFloorChangesNothing() {
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("x", 20));
        held.expireBefore(21);
        held.expireBefore(0);
        assertFalse(held.contains("x"));
        assertTrue(held.add("x", 20), "tagged at floor 21 (its bucket is below it)");
        held.expireBefore(21);
        assertTrue(held.contains("x"));
    }

    @Test
    void stringsWithEqualHashCodesAreKeptApart() {
        // Source: String.hashCode is s[0]*31^(n-1) + ... + s[n-1] (java.lang.String javadoc), so
        // 'A'*31+'a' = 65*31+97 = 2112 = 'B'*31+'B' = 66*31+66; checked here as a precondition.
        assertEquals("Aa".hashCode(), "BB".hashCode());
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("Aa", 1));
        assertFalse(held.contains("BB"));
        assertTrue(held.add("BB", 2));
        assertFalse(held.add("Aa", 2));
        assertFalse(held.add("BB", 1));
        held.expireBefore(2);
        assertFalse(held.contains("Aa"));
        assertTrue(held.contains("BB"));
        assertTrue(held.add("Aa", 3));
        assertTrue(held.contains("Aa"));
        assertTrue(held.contains("BB"));
    }

    @Test
    void aWholeFamilyOfCollidingIdsSurvivesRebuilds() {
        List<String> family = collidingFamily(10); // 1024 ids, one hash code
        DedupeWindow held = new DedupeWindow();
        for (int i = 0; i < family.size(); i++) {
            assertTrue(held.add(family.get(i), i / 100));
        }
        for (String id : family) {
            assertTrue(held.contains(id), id);
        }
        for (String id : family) {
            assertFalse(held.add(id, 50));
        }
        held.expireBefore(5);
        for (int i = 0; i < family.size(); i++) {
            assertEquals(i >= 500, held.contains(family.get(i)), family.get(i));
        }
    }

    @Test
    void theEmptyIdAndAnIdWithHashOneAreDistinct() {
        // Source: java.lang.String javadoc: "" hashes to 0 and "\u0001" to 1 (hash values a table may treat specially).
        assertEquals(0, "".hashCode());
        assertEquals(1, "\u0001".hashCode());
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("", 7));
        assertFalse(held.add("", 7));
        assertFalse(held.contains("\u0001"));
        assertTrue(held.add("\u0001", 7));
        held.expireBefore(8);
        assertTrue(held.add("", 8));
        assertFalse(held.contains("\u0001"));
    }

    @Test
    void removeUndoesAnAddAndIgnoresUnknownIds() {
        DedupeWindow held = new DedupeWindow();
        assertTrue(held.add("p", 1));
        held.remove("p");
        held.remove("never-added");
        assertFalse(held.contains("p"));
        assertTrue(held.add("p", 1));
        assertFalse(held.add("p", 1));
        assertFalse(held.contains("never-added"));
    }

    @Test
    void holdsABurstAndKeepsNoMoreThanTwiceTheHeldIdsOnceTheyExpire() {
        DedupeWindow held = new DedupeWindow();
        for (int i = 0; i < 20_000; i++) {
            assertTrue(held.add("burst-" + i, 0));
        }
        for (int i = 0; i < 20_000; i++) {
            assertTrue(held.contains("burst-" + i));
        }
        held.expireBefore(1);
        for (int i = 0; i < 20_000; i++) {
            assertFalse(held.contains("burst-" + i));
            assertTrue(held.add("burst-" + i, 1), "expired, so new again");
        }
        // A steady stream with a short horizon (at most 40 ids held): once the burst is purged, at
        // most max(16, 2 * 40) entries are kept.
        for (int i = 0; i < 200_000; i++) {
            long bucket = 2 + i / 10;
            held.expireBefore(bucket - 3);
            assertTrue(held.add("steady-" + i, bucket));
            assertTrue(i < 100_000 || held.entries() <= 2 * 40, "entries " + held.entries() + " after add " + i);
        }
        for (int i = 200_000 - 40; i < 200_000; i++) {
            assertTrue(held.contains("steady-" + i), "the last four buckets are held");
        }
        assertFalse(held.contains("steady-" + (200_000 - 41)));
        assertFalse(held.contains("burst-0"));
    }

    /**
     * Differential test against a reference model (id to bucket, ids dropped bucket by bucket): random
     * ids from a pool (with hash collisions and the empty id) and fresh ones, buckets around a moving
     * frontier (some below the floor), rising floors and undone adds, checked operation by operation.
     */
    @Test
    void agreesWithAHashMapModelOnARandomStream() {
        Random random = new Random(20240611L);
        List<String> pool = new ArrayList<>();
        for (int i = 0; i < 4000; i++) {
            pool.add("clinic-" + (i % 37) + "/" + i);
        }
        pool.addAll(collidingFamily(8));
        pool.add("");
        ReferenceModel model = new ReferenceModel();
        DedupeWindow held = new DedupeWindow();
        long frontier = 0;
        long floor = Long.MIN_VALUE;
        Set<String> added = new HashSet<>();
        int maxEntries = 0;
        for (int op = 0; op < 300_000; op++) {
            int kind = random.nextInt(100);
            if (kind < 2) {
                frontier += 1 + random.nextInt(3);
                int horizon = op < 150_000 ? 400 : 5; // a wide horizon first (growth), then a narrow one
                long newFloor = frontier - horizon;
                if (newFloor > floor) {
                    floor = newFloor;
                    model.expireBefore(floor);
                    held.expireBefore(floor);
                }
            } else {
                String id = random.nextInt(10) < 3 ? "walk-in/" + op : pool.get(random.nextInt(pool.size()));
                long bucket = frontier - random.nextInt(8) + (kind < 4 ? -1000 : 0);
                boolean isNew = held.add(id, bucket);
                assertEquals(!model.held.containsKey(id), isNew, "op " + op + " id '" + id + "'");
                if (isNew && kind >= 97) {
                    held.remove(id); // the store refused the event: the model never held it
                } else if (isNew) {
                    model.add(id, bucket);
                    added.add(id);
                }
            }
            maxEntries = Math.max(maxEntries, held.entries());
            if (op % 10_000 == 0) {
                for (String id : added) {
                    assertEquals(model.held.containsKey(id), held.contains(id), "op " + op + " id '" + id + "'");
                }
            }
        }
        for (String id : pool) {
            assertEquals(model.held.containsKey(id), held.contains(id), id);
        }
        assertTrue(maxEntries >= 4096, "the wide horizon held many ids: " + maxEntries);
        assertTrue(held.entries() < maxEntries / 4, "the narrow horizon let expired ids go: " + held.entries());
    }

    /** The reference: id to bucket, and the ids of each bucket, dropped bucket by bucket. */
    private static final class ReferenceModel {
        final Map<String, Long> held = new HashMap<>();
        final TreeMap<Long, List<String>> idsByBucket = new TreeMap<>();

        void add(String id, long bucket) {
            held.put(id, bucket);
            idsByBucket.computeIfAbsent(bucket, b -> new ArrayList<>()).add(id);
        }

        void expireBefore(long bucket) {
            Iterator<Map.Entry<Long, List<String>>> it = idsByBucket.entrySet().iterator();
            while (it.hasNext()) {
                Map.Entry<Long, List<String>> entry = it.next();
                if (entry.getKey() >= bucket) {
                    break;
                }
                for (String id : entry.getValue()) {
                    held.remove(id, entry.getKey());
                }
                it.remove();
            }
        }
    }

    /** The 2^n strings made of n blocks "Aa" or "BB": all have the same hash code. */
    private static List<String> collidingFamily(int n) {
        List<String> family = new ArrayList<>();
        for (int bits = 0; bits < 1 << n; bits++) {
            StringBuilder id = new StringBuilder();
            for (int j = 0; j < n; j++) {
                id.append((bits >> j & 1) == 0 ? "Aa" : "BB");
            }
            family.add(id.toString());
        }
        for (String id : family) {
            assertEquals(family.get(0).hashCode(), id.hashCode(), "precondition: one hash code");
        }
        return family;
    }
}
