package org.oddswatch.ingest.definition;

import java.nio.file.Path;
import java.time.Instant;

/**
 * The {@code baseline} section: a fixed period {@code [from, to)} of the stream itself, or a frozen
 * model file written by {@code oddswatch baseline}, in whose name {@code {split}} stands for the
 * split value.
 */
public record BaselineSpec(Instant from, Instant to, String file) {

    public boolean isFixedPeriod() {
        return from != null;
    }

    /** The baseline file of one stream, relative to {@code definitionDir} unless absolute. */
    public Path fileFor(Path definitionDir, String splitValue) {
        Path path = Path.of(file.replace("{split}", splitValue == null ? "" : fileSafe(splitValue)));
        return path.isAbsolute() || definitionDir == null ? path : definitionDir.resolve(path);
    }

    /** A name made safe for a file: {@code /} becomes {@code -}, other unusual characters {@code _}. */
    public static String fileSafe(String name) {
        return name.replace('/', '-').replaceAll("[^A-Za-z0-9._-]", "_");
    }
}
