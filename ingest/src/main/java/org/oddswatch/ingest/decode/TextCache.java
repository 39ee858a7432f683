package org.oddswatch.ingest.decode;

/**
 * Java strings for text values, reusing the string of an equal value seen recently in the same
 * slot: outcomes, split values and levels repeat record after record, so most of them need no new
 * string (and later comparisons with them are identity hits). A slot whose values rarely repeat
 * (ids, times) stops being looked up after a short trial. A slot can be seeded with the values a
 * definition declares for it, so that records get the definition's own strings. Only saves
 * allocation and comparison work; the strings are equal either way. Not thread-safe.
 */
final class TextCache {

    private static final int WAYS = 8;
    private static final int LONGEST = 32;
    /** Lookups before a slot's hit rate is judged; below half hits, the slot stops caching. */
    private static final int TRIAL = 512;

    private final String[][] strings;
    private final int[] next;
    private final int[] looks;
    private final int[] hits;
    private final boolean[] off;

    TextCache(int slots) {
        strings = new String[slots][WAYS];
        next = new int[slots];
        looks = new int[slots];
        hits = new int[slots];
        off = new boolean[slots];
    }

    /**
     * Puts a string expected in {@code slot} (a declared outcome or level) into one of the slot's
     * ways, unless an equal one is there already or the ways are full (seeds may be replaced later).
     */
    void seed(int slot, String value) {
        if (value.length() > LONGEST) {
            return;
        }
        String[] known = strings[slot];
        for (int w = 0; w < WAYS; w++) {
            if (known[w] == null) {
                known[w] = value;
                next[slot] = (w + 1) % WAYS;
                return;
            }
            if (known[w].equals(value)) {
                return;
            }
        }
    }

    /** The text of {@code chars[from, from + length)}. */
    String text(int slot, char[] chars, int from, int length) {
        if (off[slot] || length > LONGEST) {
            return new String(chars, from, length);
        }
        String[] known = strings[slot];
        for (int w = 0; w < WAYS; w++) {
            String k = known[w];
            if (k != null && k.length() == length && sameChars(k, chars, from)) {
                count(slot, true);
                return k;
            }
        }
        count(slot, false);
        String text = new String(chars, from, length);
        int w = next[slot];
        known[w] = text;
        next[slot] = (w + 1) % WAYS;
        return text;
    }

    /** Whether {@code chars} holds {@code known} from {@code from} on (short values: a plain loop). */
    private static boolean sameChars(String known, char[] chars, int from) {
        for (int i = 0; i < known.length(); i++) {
            if (known.charAt(i) != chars[from + i]) {
                return false;
            }
        }
        return true;
    }

    private void count(int slot, boolean hit) {
        if (looks[slot] < TRIAL) {
            looks[slot]++;
            if (hit) {
                hits[slot]++;
            }
            if (looks[slot] == TRIAL && hits[slot] * 2 < TRIAL) {
                off[slot] = true;
            }
        }
    }
}
