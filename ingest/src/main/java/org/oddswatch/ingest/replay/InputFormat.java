package org.oddswatch.ingest.replay;

import java.nio.file.Path;
import java.util.Locale;

/** Event file formats: one JSON object per line, or CSV with a header row. */
public enum InputFormat {
    JSONL, CSV;

    /** A name ending in {@code .csv} (any case) is CSV; anything else is JSON Lines. */
    public static InputFormat of(Path file) {
        return file.getFileName().toString().toLowerCase(Locale.ROOT).endsWith(".csv") ? CSV : JSONL;
    }

    /** {@code jsonl}, {@code json}, {@code ndjson} or {@code csv}, case-insensitive. */
    public static InputFormat parse(String text) {
        return switch (text.toLowerCase(Locale.ROOT)) {
            case "jsonl", "json", "ndjson" -> JSONL;
            case "csv" -> CSV;
            default -> throw new IllegalArgumentException(
                    "unknown input format '" + text + "' (expected jsonl or csv)");
        };
    }
}
