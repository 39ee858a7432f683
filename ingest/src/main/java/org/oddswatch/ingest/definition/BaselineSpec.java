package org.oddswatch.ingest.definition;

import java.nio.file.Path;
import java.time.Instant;

/**
 * The {@code baseline} section: either a fixed period {@code [from, to)} of the stream itself, fitted
 * and frozen once the watermark passes {@code to + lateness}, or a frozen model file written by
 * {@code oddswatch baseline}. In the file name, {@code {split}} stands for the split value.
 */
public record BaselineSpec(Instant from, Instant to, String file) {

    public boolean isFixedPeriod() {
        return from != null;
    }

    /** The baseline file of one stream: {@code {split}} replaced by the split value (or removed). */
    public Path fileFor(Path definitionDir, String splitValue) {
        String name = file.replace("{split}", splitValue == null ? "" : fileSafe(splitValue));
        Path path = Path.of(name);
        return path.isAbsolute() || definitionDir == null ? path : definitionDir.resolve(path);
    }

    /** A name made safe for a file: {@code /} becomes {@code -}, other unusual characters {@code _}. */
    public static String fileSafe(String name) {
        return name.replace('/', '-').replaceAll("[^A-Za-z0-9._-]", "_");
    }
}
