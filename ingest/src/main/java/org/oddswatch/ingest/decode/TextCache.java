package org.oddswatch.ingest.decode;

import java.nio.charset.StandardCharsets;
import java.util.Arrays;

/**
 * Java strings for plain (ASCII) text values, reusing the string of an equal value seen recently in
 * the same slot: outcomes, split values and levels repeat record after record, so most of them need
 * no new string. A slot whose values rarely repeat (ids, times) stops being looked up after a short
 * trial. Only saves allocation; the strings are equal either way. Not thread-safe.
 */
final class TextCache {

    private static final int WAYS = 8;
    private static final int LONGEST = 32;
    /** Lookups before a slot's hit rate is judged; below half hits, the slot stops caching. */
    private static final int TRIAL = 512;

    private final byte[][][] bytes;
    private final String[][] strings;
    private final int[] next;
    private final int[] looks;
    private final int[] hits;
    private final boolean[] off;

    TextCache(int slots) {
        bytes = new byte[slots][WAYS][];
        strings = new String[slots][WAYS];
        next = new int[slots];
        looks = new int[slots];
        hits = new int[slots];
        off = new boolean[slots];
    }

    /** The text of {@code b[from, to)}, ASCII only. */
    String text(int slot, byte[] b, int from, int to) {
        int length = to - from;
        if (off[slot] || length > LONGEST) {
            return new String(b, from, length, StandardCharsets.ISO_8859_1);
        }
        byte[][] known = bytes[slot];
        for (int w = 0; w < WAYS; w++) {
            byte[] k = known[w];
            if (k != null && k.length == length && sameBytes(k, b, from)) {
                count(slot, true);
                return strings[slot][w];
            }
        }
        count(slot, false);
        String text = new String(b, from, length, StandardCharsets.ISO_8859_1);
        int w = next[slot];
        known[w] = Arrays.copyOfRange(b, from, to);
        strings[slot][w] = text;
        next[slot] = (w + 1) % WAYS;
        return text;
    }

    /**
     * Whether {@code b} holds {@code known} from {@code from} on. A plain loop: these values and names
     * are short, where {@code Arrays.equals} costs more to set up.
     */
    static boolean sameBytes(byte[] known, byte[] b, int from) {
        for (int i = 0; i < known.length; i++) {
            if (known[i] != b[from + i]) {
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
