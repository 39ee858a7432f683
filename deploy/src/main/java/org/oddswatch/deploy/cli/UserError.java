package org.oddswatch.deploy.cli;

/**
 * A problem the user can fix (a bad option value, a missing file, an unreadable definition). The
 * command line prints only its message, on one line, and exits with {@link #exitCode()}.
 */
public final class UserError extends RuntimeException {

    /** Exit status of usage and configuration errors. */
    public static final int USAGE = 2;
    /** Exit status of runtime failures. */
    public static final int RUNTIME = 1;

    private final int exitCode;

    private UserError(String message, int exitCode, Throwable cause) {
        super(message, cause);
        this.exitCode = exitCode;
    }

    /** A usage or configuration error: exit status 2. */
    public static UserError config(String message) {
        return new UserError(message, USAGE, null);
    }

    /** A usage or configuration error with its cause (shown with --verbose): exit status 2. */
    public static UserError config(String message, Throwable cause) {
        return new UserError(message, USAGE, cause);
    }

    /** A runtime failure the user should know about in plain words: exit status 1. */
    public static UserError runtime(String message, Throwable cause) {
        return new UserError(message, RUNTIME, cause);
    }

    public int exitCode() {
        return exitCode;
    }
}
