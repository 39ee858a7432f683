package org.oddswatch.deploy.cli;

import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;

/**
 * Ctrl-C (SIGINT) and SIGTERM as a stop request for long-running commands ({@code run},
 * {@code sandbox}, {@code simulate --topic}): the first signal asks the command to stop and clean up,
 * so it can finish normally and exit 0; a second one halts at once (exit 130).
 *
 * <p>Uses the JDK's {@code sun.misc.Signal} (module {@code jdk.unsupported}) where available; elsewhere
 * a shutdown hook asks for the stop and waits up to {@link #GRACE_SECONDS} seconds for the cleanup.
 */
final class StopSignals {

    static final int GRACE_SECONDS = 20;

    private final CountDownLatch requested = new CountDownLatch(1);
    private final CountDownLatch finished = new CountDownLatch(1);

    private StopSignals() {
    }

    /** Installs the handlers for the rest of the process. */
    static StopSignals install() {
        StopSignals signals = new StopSignals();
        boolean handled = signals.handle("TERM") & signals.handle("INT");
        if (!handled) {
            Runtime.getRuntime().addShutdownHook(new Thread(() -> {
                if (signals.requested.getCount() > 0) {
                    signals.request();
                    try {
                        signals.finished.await(GRACE_SECONDS, TimeUnit.SECONDS);
                    } catch (InterruptedException e) {
                        Thread.currentThread().interrupt();
                    }
                }
            }, "oddswatch-stop"));
        }
        return signals;
    }

    @SuppressWarnings("removal")
    private boolean handle(String name) {
        try {
            sun.misc.Signal.handle(new sun.misc.Signal(name), signal -> {
                if (requested.getCount() == 0) {
                    Runtime.getRuntime().halt(130);
                }
                request();
            });
            return true;
        } catch (IllegalArgumentException | LinkageError e) {
            return false;
        }
    }

    /** Asks for a stop as a signal would (also used by --duration and --until-alert). */
    void request() {
        if (requested.getCount() > 0) {
            requested.countDown();
        }
    }

    boolean stopRequested() {
        return requested.getCount() == 0;
    }

    /** Waits until a stop is requested or the timeout passes; true when requested. */
    boolean await(long millis) throws InterruptedException {
        return requested.await(millis, TimeUnit.MILLISECONDS);
    }

    /** Marks the cleanup as done (lets a shutdown hook, where used, return). */
    void finished() {
        finished.countDown();
    }
}
