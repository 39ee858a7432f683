package org.oddswatch.deploy.cli;

import org.oddswatch.ingest.replay.InputFormat;
import picocli.CommandLine.Option;

/** The {@code --format} option of the commands that read an event file (a picocli mixin). */
final class FormatOption {

    @Option(names = "--format", paramLabel = "FORMAT", description = "Input format: jsonl or csv (default: by the file name).")
    String name;

    /** The chosen format, or null to tell it by the file name; an unknown name is a configuration error. */
    InputFormat format() {
        if (name == null) {
            return null;
        }
        try {
            return InputFormat.parse(name);
        } catch (IllegalArgumentException e) {
            throw UserError.config("--format: " + e.getMessage(), e);
        }
    }
}
