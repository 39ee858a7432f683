package org.oddswatch.ingest.decode;

import java.time.DateTimeException;
import java.time.LocalDate;
import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.util.Locale;

/**
 * RFC 3339 date-time text to epoch milliseconds, fractions below a millisecond dropped (floor). The
 * common shape {@code yyyy-MM-ddTHH:mm:ss[.fraction](Z|+hh:mm|-hh:mm)} is read by hand (every event's
 * time is read; {@link DateTimeFormatter} costs about twice a whole record's decoding); other text goes
 * to {@link DateTimeFormatter#ISO_OFFSET_DATE_TIME}, which the hand-written reading agrees with.
 */
final class Rfc3339 {

    private Rfc3339() {
    }

    /** @throws java.time.format.DateTimeParseException when the text is not an offset date-time */
    static long toEpochMillis(String text) {
        long common = readCommonShape(text);
        return common != Long.MIN_VALUE ? common
                : OffsetDateTime.parse(text.toUpperCase(Locale.ROOT), DateTimeFormatter.ISO_OFFSET_DATE_TIME)
                        .toInstant().toEpochMilli();
    }

    /** The epoch milliseconds of text of the common shape, or {@link Long#MIN_VALUE} for other text. */
    static long readCommonShape(String text) {
        int n = text.length();
        if (n < 20 || text.charAt(4) != '-' || text.charAt(7) != '-' || text.charAt(13) != ':'
                || text.charAt(16) != ':' || (text.charAt(10) != 'T' && text.charAt(10) != 't')) {
            return Long.MIN_VALUE;
        }
        int year = digits(text, 0, 4);
        int hour = digits(text, 11, 2);
        int minute = digits(text, 14, 2);
        int second = digits(text, 17, 2);
        if (year < 0 || hour < 0 || hour > 23 || minute < 0 || minute > 59 || second < 0 || second > 59) {
            return Long.MIN_VALUE;
        }
        long day;
        try {
            day = LocalDate.of(year, digits(text, 5, 2), digits(text, 8, 2)).toEpochDay();
        } catch (DateTimeException e) {
            return Long.MIN_VALUE; // no such date: the formatter reports it
        }
        int i = 19;
        long millis = 0;
        if (i < n && text.charAt(i) == '.') {
            int start = ++i;
            while (i < n && text.charAt(i) >= '0' && text.charAt(i) <= '9') {
                i++;
            }
            if (i == start || i - start > 9) {
                return Long.MIN_VALUE;
            }
            millis = digits(text, start, Math.min(i - start, 3)) * (i - start == 1 ? 100 : i - start == 2 ? 10 : 1);
        }
        int offset; // seconds
        char zone = i < n ? text.charAt(i) : ' ';
        if ((zone == 'Z' || zone == 'z') && i == n - 1) {
            offset = 0;
        } else if ((zone == '+' || zone == '-') && i == n - 6 && text.charAt(i + 3) == ':') {
            int hours = digits(text, i + 1, 2);
            int minutes = digits(text, i + 4, 2);
            if (hours < 0 || minutes < 0 || minutes > 59 || hours * 60 + minutes > 18 * 60) {
                return Long.MIN_VALUE;
            }
            offset = (hours * 3600 + minutes * 60) * (zone == '-' ? -1 : 1);
        } else {
            return Long.MIN_VALUE;
        }
        return (day * 86_400L + hour * 3600L + minute * 60L + second - offset) * 1000L + millis;
    }

    /** The value of {@code count} decimal digits from {@code from}, or -1 when one is not a digit. */
    private static int digits(String text, int from, int count) {
        int value = 0;
        for (int i = from; i < from + count; i++) {
            char c = text.charAt(i);
            if (c < '0' || c > '9') {
                return -1;
            }
            value = value * 10 + (c - '0');
        }
        return value;
    }
}
