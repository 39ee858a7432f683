package org.oddswatch.ingest.replay;

import java.nio.file.Path;
import java.util.Locale;

/** Event file formats: one JSON object per line, or CSV with a header row. */
public enum InputFormat {
    JSONL, CSV;

    /** {@code .csv} (also {@code .csv.txt}-less plain) is CSV; anything else is JSON Lines. */
    public static InputFormat of(Path file) {
        String name = file.getFileName().toString().toLowerCase(Locale.ROOT);
        return name.endsWith(".csv") ? CSV : JSONL;
    }

    /** {@code jsonl}, {@code json}, {@code ndjson} or {@code csv}, case-insensitive. */
    public static InputFormat parse(String text) {
        switch (text.toLowerCase(Locale.ROOT)) {
            case "jsonl":
            case "json":
            case "ndjson":
                return JSONL;
            case "csv":
                return CSV;
            default:
                throw new IllegalArgumentException("unknown input format '" + text + "' (expected jsonl or csv)");
        }
    }
}
