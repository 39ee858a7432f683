package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.LinkOption;
import java.nio.file.Path;
import me.tongfei.progressbar.ProgressBarBuilder;
import picocli.CommandLine.Option;

/**
 * Whether a long command draws its progress ({@link ProgressMeter}): only on a terminal, and not with
 * {@code --hide-progress}. A terminal means {@link System#console()} exists (on Java 17: standard
 * input and output are terminals) and, where {@code /proc} tells, standard output and standard
 * error are terminal devices too (which also holds on later Java versions, whose console exists
 * when the streams are redirected); so a redirected or piped output, a script and a test see no
 * progress text.
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
        return System.console() != null && terminalDevice(1) && terminalDevice(2);
    }

    /** True when file descriptor {@code fd} is a terminal device, or when {@code /proc} cannot tell. */
    private static boolean terminalDevice(int fd) {
        Path link = Path.of("/proc/self/fd/" + fd);
        if (!Files.exists(link, LinkOption.NOFOLLOW_LINKS)) {
            return true;
        }
        try {
            String device = Files.readSymbolicLink(link).toString();
            return device.startsWith("/dev/pts/") || device.startsWith("/dev/tty");
        } catch (IOException | UnsupportedOperationException e) {
            return true;
        }
    }
}
