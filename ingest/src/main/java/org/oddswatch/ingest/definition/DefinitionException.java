package org.oddswatch.ingest.definition;

/**
 * A monitor definition that cannot be used. The message reads {@code file:line: key: problem}, for
 * instance {@code monitors.yaml:14: monitors[0].terms[2].reference: level '30-39' is not one of the
 * declared levels}; line 0 (unknown, as for an unreadable file) and an empty key are left out.
 */
public final class DefinitionException extends Exception {

    private final String file;
    private final int line;
    private final String key;
    private final String problem;

    public DefinitionException(String file, int line, String key, String problem) {
        super(file + (line > 0 ? ":" + line : "") + ": " + (key == null || key.isEmpty() ? "" : key + ": ") + problem);
        this.file = file;
        this.line = line;
        this.key = key;
        this.problem = problem;
    }

    public String file() {
        return file;
    }

    public int line() {
        return line;
    }

    /** The key path such as {@code monitors[0].window.step}, or empty for the whole file. */
    public String key() {
        return key;
    }

    public String problem() {
        return problem;
    }
}
