package org.oddswatch.deploy.cli;

import java.time.Instant;
import java.time.LocalDate;
import java.time.OffsetDateTime;
import java.time.ZoneOffset;
import java.time.format.DateTimeParseException;
import picocli.CommandLine.ITypeConverter;
import picocli.CommandLine.TypeConversionException;

/** Instants on the command line: RFC 3339 ({@code 2026-03-30T00:00:00Z}) or a date ({@code 2026-03-30}, midnight UTC). */
final class InstantConverter implements ITypeConverter<Instant> {

    @Override
    public Instant convert(String value) {
        String text = value.trim();
        try {
            if (text.length() == 10) {
                return LocalDate.parse(text).atStartOfDay(ZoneOffset.UTC).toInstant();
            }
            return OffsetDateTime.parse(text).toInstant();
        } catch (DateTimeParseException e) {
            throw new TypeConversionException("'" + value + "' is not an RFC 3339 time or a date (example: 2026-03-30T00:00:00Z)");
        }
    }
}
