package org.oddswatch.deploy.cli;

import java.time.Duration;
import java.time.format.DateTimeParseException;
import java.util.Locale;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import picocli.CommandLine.ITypeConverter;
import picocli.CommandLine.TypeConversionException;

/**
 * Durations on the command line: ISO-8601 as in the definitions ({@code P28D}, {@code PT90S}), or a
 * number with one unit: {@code 90s}, {@code 5m}, {@code 2h}, {@code 3d}, {@code 40w}, {@code 500ms}.
 */
final class DurationConverter implements ITypeConverter<Duration> {

    private static final Pattern SHORT = Pattern.compile("(\\d+)(ms|s|m|h|d|w)");

    @Override
    public Duration convert(String value) {
        String text = value.trim();
        Matcher m = SHORT.matcher(text.toLowerCase(Locale.ROOT));
        if (m.matches()) {
            long n = Long.parseLong(m.group(1));
            return switch (m.group(2)) {
                case "ms" -> Duration.ofMillis(n);
                case "s" -> Duration.ofSeconds(n);
                case "m" -> Duration.ofMinutes(n);
                case "h" -> Duration.ofHours(n);
                case "d" -> Duration.ofDays(n);
                default -> Duration.ofDays(7 * n);
            };
        }
        try {
            return Duration.parse(text.toUpperCase(Locale.ROOT));
        } catch (DateTimeParseException e) {
            throw new TypeConversionException("'" + value + "' is not a duration (examples: P28D, PT90S, 90s, 40w)");
        }
    }
}
