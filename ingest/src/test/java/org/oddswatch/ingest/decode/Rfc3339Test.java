package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeParseException;
import java.util.Locale;
import java.util.Random;
import org.junit.jupiter.api.Test;

/** The hand-written reading of the common shape must agree with java.time's ISO_OFFSET_DATE_TIME on every input. */
class Rfc3339Test {

    // Source: java.time.format.DateTimeFormatter.ISO_OFFSET_DATE_TIME (the JDK is the reference).
    private static Long reference(String text) {
        try {
            return OffsetDateTime.parse(text.toUpperCase(Locale.ROOT), DateTimeFormatter.ISO_OFFSET_DATE_TIME)
                    .toInstant().toEpochMilli();
        } catch (DateTimeParseException e) {
            return null;
        }
    }

    private static Long ours(String text) {
        try {
            return Rfc3339.toEpochMillis(text);
        } catch (DateTimeParseException e) {
            return null;
        }
    }

    @Test
    void agreesWithTheJdkOnRandomDateTimes() {
        Random random = new Random(3339);
        String[] zones = {"Z", "z", "+00:00", "+01:00", "-05:30", "+14:00", "-18:00", "+18:00", "+19:00", "+01:60",
                "+0100", "", "+01", "-00:00"};
        for (int i = 0; i < 20_000; i++) {
            int year = random.nextInt(10) == 0 ? random.nextInt(10_000) : 1960 + random.nextInt(120);
            String text = String.format(Locale.ROOT, "%04d-%02d-%02d%s%02d:%02d:%02d%s%s", year, 1 + random.nextInt(13),
                    random.nextInt(33), random.nextInt(20) == 0 ? "t" : "T", random.nextInt(25), random.nextInt(61),
                    random.nextInt(61), fraction(random), zones[random.nextInt(zones.length)]);
            assertEquals(reference(text), ours(text), text);
        }
    }

    private static String fraction(Random random) {
        int digits = random.nextInt(12);
        if (digits == 0 || digits > 10) {
            return "";
        }
        StringBuilder b = new StringBuilder(".");
        for (int i = 0; i < digits; i++) {
            b.append(random.nextInt(10));
        }
        return b.toString();
    }

    @Test
    void knownValues() {
        // Source: RFC 3339 section 5.8 examples; epoch values computed by java.time (the reference above).
        assertEquals(reference("1985-04-12T23:20:50.52Z"), Rfc3339.readCommonShape("1985-04-12T23:20:50.52Z"));
        assertEquals(482196050520L, Rfc3339.readCommonShape("1985-04-12T23:20:50.52Z"));
        assertEquals(reference("1996-12-19T16:39:57-08:00"), Rfc3339.readCommonShape("1996-12-19T16:39:57-08:00"));
        assertEquals(Long.MIN_VALUE, Rfc3339.readCommonShape("1990-12-31T23:59:60Z"), "leap seconds go to the JDK (rejected)");
        assertEquals(reference("2026-02-03T09:30Z"), ours("2026-02-03T09:30Z"), "no seconds: JDK path");
        assertThrows(DateTimeParseException.class, () -> Rfc3339.toEpochMillis("2026-02-30T00:00:00Z"));
    }
}
