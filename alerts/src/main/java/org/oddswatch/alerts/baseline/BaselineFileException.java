package org.oddswatch.alerts.baseline;

import java.nio.file.Path;

/** A baseline file that cannot be read or does not fit the monitor; the message names the file. */
public final class BaselineFileException extends RuntimeException {

    private final transient Path file;

    public BaselineFileException(Path file, String problem, Throwable cause) {
        super("baseline file " + file + ": " + problem, cause);
        this.file = file;
    }

    public BaselineFileException(Path file, String problem) {
        this(file, problem, null);
    }

    public Path file() {
        return file;
    }
}
