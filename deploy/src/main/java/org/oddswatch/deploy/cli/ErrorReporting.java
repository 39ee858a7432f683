package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.io.UncheckedIOException;
import java.nio.file.AccessDeniedException;
import java.nio.file.NoSuchFileException;
import org.oddswatch.ingest.definition.DefinitionException;
import picocli.CommandLine;
import picocli.CommandLine.IExecutionExceptionHandler;
import picocli.CommandLine.IParameterExceptionHandler;
import picocli.CommandLine.ParameterException;
import picocli.CommandLine.ParseResult;

/**
 * Turns every failure into one line on standard error and an exit status: 2 for usage and
 * configuration errors (bad options, a definition that does not load, a missing input file),
 * 1 for runtime failures. {@code --verbose} adds the stack trace.
 */
final class ErrorReporting implements IExecutionExceptionHandler, IParameterExceptionHandler {

    private final OddswatchCommand top;

    ErrorReporting(OddswatchCommand top) {
        this.top = top;
    }

    @Override
    public int handleParseException(ParameterException e, String[] args) {
        CommandLine cmd = e.getCommandLine();
        PrintWriter err = cmd.getErr();
        String name = cmd.getCommandSpec().qualifiedName();
        err.println(name + ": " + e.getMessage() + " (see '" + name + " --help')");
        err.flush();
        return UserError.USAGE;
    }

    @Override
    public int handleExecutionException(Exception e, CommandLine cmd, ParseResult parsed) {
        PrintWriter err = cmd.getErr();
        String name = cmd.getCommandSpec().qualifiedName();
        Throwable cause = unwrap(e);
        int code;
        String message;
        if (cause instanceof UserError user) {
            code = user.exitCode();
            message = user.getMessage();
        } else if (cause instanceof DefinitionException definition) {
            code = UserError.USAGE;
            message = definition.getMessage();
        } else if (cause instanceof NoSuchFileException missing) {
            code = UserError.USAGE;
            message = "no such file: " + missing.getFile();
        } else if (cause instanceof AccessDeniedException denied) {
            code = UserError.USAGE;
            message = "cannot access: " + denied.getFile();
        } else {
            code = UserError.RUNTIME;
            message = describe(cause) + (top.verbose() ? "" : " (--verbose shows details)");
        }
        err.println(name + ": " + oneLine(message));
        if (top.verbose()) {
            e.printStackTrace(err);
        }
        err.flush();
        return code;
    }

    private static Throwable unwrap(Throwable e) {
        Throwable t = e;
        while ((t instanceof UncheckedIOException || t instanceof java.util.concurrent.ExecutionException
                || t instanceof java.util.concurrent.CompletionException) && t.getCause() != null) {
            t = t.getCause();
        }
        return t;
    }

    private static String describe(Throwable t) {
        String message = t.getMessage();
        return message == null || message.isBlank() ? t.getClass().getSimpleName() : message;
    }

    private static String oneLine(String text) {
        return text.replace("\r", " ").replace("\n", " ").trim();
    }
}
