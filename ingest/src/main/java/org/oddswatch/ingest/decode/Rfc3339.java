package org.oddswatch.ingest.decode;

import java.time.OffsetDateTime;
import java.time.format.DateTimeFormatter;
import java.time.format.DateTimeParseException;
import java.util.Locale;

/**
 * RFC 3339 date-time text to epoch milliseconds. The common shape
 * {@code yyyy-MM-ddTHH:mm:ss[.fraction](Z|+hh:mm|-hh:mm)} is read by hand (every event's time is
 * read, and the hand-written reading costs a fraction of the formatter's); anything else goes to
 * {@link DateTimeFormatter#ISO_OFFSET_DATE_TIME}, so the result is always the same as the
 * formatter's. Fractions below a millisecond are dropped (floor).
 */
final class Rfc3339 {

    private static final int[] DAYS_IN_MONTH = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};

    private Rfc3339() {
    }

    /** @throws DateTimeParseException when the text is not an offset date-time */
    static long toEpochMillis(String text) {
        long common = readCommonShape(text);
        if (common != Long.MIN_VALUE) {
            return common;
        }
        return OffsetDateTime.parse(text.toUpperCase(Locale.ROOT), DateTimeFormatter.ISO_OFFSET_DATE_TIME)
                .toInstant().toEpochMilli();
    }

    /**
     * The epoch milliseconds of text of the common shape, or {@link Long#MIN_VALUE} when the text has
     * another shape or is not a valid date-time (the formatter then decides).
     */
    static long readCommonShape(String text) {
        int n = text.length();
        if (n < 20 || text.charAt(4) != '-' || text.charAt(7) != '-' || (text.charAt(10) != 'T' && text.charAt(10) != 't')
                || text.charAt(13) != ':' || text.charAt(16) != ':') {
            return Long.MIN_VALUE;
        }
        int year = digits(text, 0, 4);
        int month = digits(text, 5, 2);
        int day = digits(text, 8, 2);
        int hour = digits(text, 11, 2);
        int minute = digits(text, 14, 2);
        int second = digits(text, 17, 2);
        if (year < 0 || month < 1 || month > 12 || day < 1 || hour < 0 || hour > 23 || minute < 0 || minute > 59
                || second < 0 || second > 59) {
            return Long.MIN_VALUE;
        }
        boolean leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
        int monthDays = month == 2 && leap ? 29 : DAYS_IN_MONTH[month - 1];
        if (day > monthDays) {
            return Long.MIN_VALUE;
        }
        int i = 19;
        long millis = 0;
        if (i < n && text.charAt(i) == '.') {
            int start = ++i;
            while (i < n && text.charAt(i) >= '0' && text.charAt(i) <= '9') {
                if (i - start < 3) {
                    millis = millis * 10 + (text.charAt(i) - '0');
                }
                i++;
            }
            int count = i - start;
            if (count == 0 || count > 9) {
                return Long.MIN_VALUE;
            }
            for (int k = count; k < 3; k++) {
                millis *= 10;
            }
        }
        if (i >= n) {
            return Long.MIN_VALUE;
        }
        int offsetSeconds;
        char zone = text.charAt(i);
        if ((zone == 'Z' || zone == 'z') && i == n - 1) {
            offsetSeconds = 0;
        } else if ((zone == '+' || zone == '-') && i == n - 6 && text.charAt(i + 3) == ':') {
            int oh = digits(text, i + 1, 2);
            int om = digits(text, i + 4, 2);
            if (oh < 0 || oh > 18 || om < 0 || om > 59 || (oh == 18 && om > 0)) {
                return Long.MIN_VALUE;
            }
            offsetSeconds = (oh * 3600 + om * 60) * (zone == '-' ? -1 : 1);
        } else {
            return Long.MIN_VALUE;
        }
        long days = daysFromCivil(year, month, day);
        long seconds = days * 86_400L + hour * 3600L + minute * 60L + second - offsetSeconds;
        return seconds * 1000L + millis;
    }

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

    /** Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant's days_from_civil). */
    private static long daysFromCivil(int year, int month, int day) {
        long y = month <= 2 ? year - 1 : year;
        long era = Math.floorDiv(y, 400);
        long yoe = y - era * 400;
        long doy = (153L * (month + (month > 2 ? -3 : 9)) + 2) / 5 + day - 1;
        long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
        return era * 146_097 + doe - 719_468;
    }
}
