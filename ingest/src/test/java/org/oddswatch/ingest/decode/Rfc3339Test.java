package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.node.TextNode;
import org.junit.jupiter.api.Test;

/** Event times given as RFC 3339 text ({@link EventDecoder#parseTime}). */
class Rfc3339Test {

    private static long time(String text) {
        return EventDecoder.parseTime(TextNode.valueOf(text));
    }

    @Test
    void knownValues() {
        // Source: RFC 3339 section 5.8 examples; epoch milliseconds by hand: 1985-04-12 is day 5580
        // since 1970-01-01, 5580 * 86400 + 23:20:50 = 482196050 s.
        assertEquals(482196050520L, time("1985-04-12T23:20:50.52Z"));
        assertEquals(482196050520L, time(" 1985-04-12t23:20:50.520999z "), "lower case, sub-millisecond floor");
        // 1996-12-19 is day 9849: 9849 * 86400 + 16:39:57 + 8 h = 851042397 s.
        assertEquals(851042397000L, time("1996-12-19T16:39:57-08:00"));
        assertEquals(1770111000000L, time("2026-02-03T09:30Z"), "no seconds");
    }

    @Test
    void invalidDateTimesAreBadTimes() {
        for (String text : new String[] {"1990-12-31T23:59:60Z", "2026-02-30T00:00:00Z", "2026-02-03T09:30:00",
                "2026-02-03T09:30:00+19:00", "2026-02-03T09:30:00.1234567890Z", "2026-02-03 09:30:00Z"}) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> time(text), text);
            assertEquals("'" + text + "' is not an RFC 3339 time with an offset (for example 2026-02-03T09:30:00Z)"
                    + " or epoch milliseconds", e.getMessage());
        }
    }
}
