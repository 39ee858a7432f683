package org.oddswatch.ingest.definition;

/**
 * A monitor definition that cannot be used. The message reads {@code file:line: key: problem}, for
 * instance {@code monitors.yaml:14: monitors[0].terms[2].reference: level '30-39' is not one of the
 * declared levels}; the parts are also available separately.
 */
public final class DefinitionException extends Exception {

    private final String file;
    private final int line;
    private final String key;
    private final String problem;

    public DefinitionException(String file, int line, String key, String problem) {
        super(format(file, line, key, problem));
        this.file = file;
        this.line = line;
        this.key = key;
        this.problem = problem;
    }

    private static String format(String file, int line, String key, String problem) {
        StringBuilder text = new StringBuilder(file);
        if (line > 0) {
            text.append(':').append(line);
        }
        text.append(": ");
        if (key != null && !key.isEmpty()) {
            text.append(key).append(": ");
        }
        return text.append(problem).toString();
    }

    /** The file name as given to the loader. */
    public String file() {
        return file;
    }

    /** The 1-based line, or 0 when unknown (an unreadable file). */
    public int line() {
        return line;
    }

    /** The key path such as {@code monitors[0].window.step}, or empty for the whole file. */
    public String key() {
        return key;
    }

    /** The problem without file, line and key. */
    public String problem() {
        return problem;
    }
}
