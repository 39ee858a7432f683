package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.LinkOption;
import java.nio.file.Path;
import me.tongfei.progressbar.ProgressBarBuilder;
import picocli.CommandLine.Option;

/**
 * Whether a long command draws its progress ({@link ProgressMeter}): only on a terminal, and not with
 * {@code --hide-progress}. A terminal means {@link System#console()} exists (standard input and
 * output are terminals) and, where {@code /proc} tells, standard error is a terminal device too; so
 * a redirected or piped output, a script and a test see no progress text.
 */
final class ProgressOption {

    @Option(names = "--hide-progress", description = "Draw no progress bar. It is drawn on standard error only when "
            + "the command runs on a terminal; redirected or piped output never shows it.")
    boolean hide;

    /** The meter for {@code bar}: drawn on standard error, or {@link ProgressMeter#QUIET}. */
    ProgressMeter start(ProgressBarBuilder bar) {
        return hide || !onTerminal() ? ProgressMeter.QUIET : ProgressMeter.onStandardError(bar);
    }

    static boolean onTerminal() {
        if (System.console() == null) {
            return false;
        }
        Path stderr = Path.of("/proc/self/fd/2");
        if (!Files.exists(stderr, LinkOption.NOFOLLOW_LINKS)) {
            return true;
        }
        try {
            String device = Files.readSymbolicLink(stderr).toString();
            return device.startsWith("/dev/pts/") || device.startsWith("/dev/tty");
        } catch (IOException | UnsupportedOperationException e) {
            return true;
        }
    }
}
