package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotSame;
import static org.junit.jupiter.api.Assertions.assertSame;

import org.junit.jupiter.api.Test;

class TextCacheTest {

    private static String text(TextCache cache, int slot, String padded, int from, int to) {
        return cache.text(slot, padded.toCharArray(), from, to - from);
    }

    @Test
    void repeatedValuesOfASlotShareOneStringAndSlotsAreKeptApart() {
        TextCache cache = new TextCache(2);
        String first = text(cache, 0, "xxpositivexx", 2, 10);
        assertEquals("positive", first);
        assertSame(first, text(cache, 0, "positive", 0, 8), "the same bytes elsewhere give the cached string");
        assertEquals("positiv", text(cache, 0, "positive", 0, 7), "a prefix is a different value");
        String other = text(cache, 1, "positive", 0, 8);
        assertEquals("positive", other);
        assertNotSame(first, other, "each slot has its own cache");
        assertEquals("", text(cache, 0, "\"\"", 1, 1));
        assertEquals("f\u00e9ver", text(cache, 0, "f\u00e9ver", 0, 5), "any characters, not only ASCII");
        assertSame(text(cache, 0, "xf\u00e9ver", 1, 6), text(cache, 0, "f\u00e9ver", 0, 5));
    }

    @Test
    void aSlotWhoseValuesNeverRepeatStopsCachingAndStillGivesEqualText() {
        TextCache cache = new TextCache(1);
        for (int i = 0; i < 2000; i++) {
            String id = "t-11-" + i;
            assertEquals(id, text(cache, 0, id, 0, id.length()));
        }
        String again = text(cache, 0, "t-11-1999", 0, 9);
        assertEquals("t-11-1999", again);
        assertNotSame(again, text(cache, 0, "t-11-1999", 0, 9), "caching is off for this slot now");
    }

    @Test
    void moreDistinctValuesThanWaysStillComeOutRight() {
        TextCache cache = new TextCache(1);
        String[] levels = {"0-17", "18-39", "40-64", "65+", "a", "b", "c", "d", "e", "f", "g"};
        for (int round = 0; round < 50; round++) {
            for (String level : levels) {
                assertEquals(level, text(cache, 0, level, 0, level.length()));
            }
        }
    }
}
