package org.oddswatch.deploy.cli;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Iterator;
import java.util.function.LongConsumer;
import me.tongfei.progressbar.ConsoleProgressBarConsumer;
import me.tongfei.progressbar.ProgressBar;
import me.tongfei.progressbar.ProgressBarBuilder;
import me.tongfei.progressbar.ProgressBarConsumer;
import me.tongfei.progressbar.ProgressBarStyle;

/**
 * The progress of one long command, drawn by the progressbar library: the amount done of the
 * expected total, the rate, the time elapsed and the estimated time left, redrawn on one line of
 * standard error. Work is counted through {@link #accept} (an amount done since the last call);
 * {@link #QUIET} counts nothing and draws nothing. Standard output is never written.
 */
final class ProgressMeter implements LongConsumer, AutoCloseable {

    /** Draws nothing: the meter when the output is not a terminal or progress is hidden. */
    static final ProgressMeter QUIET = new ProgressMeter(null);

    private final ProgressBar bar;

    private ProgressMeter(ProgressBar bar) {
        this.bar = bar;
    }

    /**
     * A bar of the bytes of {@code file} read; its total is the file's size. Shown in kB (10^3 bytes)
     * below 100 MB, else in MB (10^6 bytes), so that the amount moves in whole units.
     */
    static ProgressBarBuilder fileBytes(String task, Path file) throws IOException {
        long size = Files.size(file);
        boolean large = size >= 100_000_000L;
        return new ProgressBarBuilder().setTaskName(task).setInitialMax(size)
                .setUnit(large ? " MB" : " kB", large ? 1_000_000 : 1_000).showSpeed();
    }

    /** A bar of records, towards an expected count. */
    static ProgressBarBuilder records(String task, long expected) {
        return new ProgressBarBuilder().setTaskName(task).setInitialMax(expected).setUnit(" records", 1).showSpeed();
    }

    /** A meter drawing {@code bar} through {@code consumer} (standard error in the commands). */
    static ProgressMeter drawn(ProgressBarBuilder bar, ProgressBarConsumer consumer) {
        return new ProgressMeter(bar.setStyle(ProgressBarStyle.ASCII).setConsumer(consumer).build());
    }

    /** A meter on standard error. */
    static ProgressMeter onStandardError(ProgressBarBuilder bar) {
        return drawn(bar, new ConsoleProgressBarConsumer(System.err));
    }

    /** Adds {@code amount} to the work done. */
    @Override
    public void accept(long amount) {
        if (bar != null) {
            bar.stepBy(amount);
        }
    }

    /** {@code items}, counting one for each item taken. */
    <T> Iterator<T> counting(Iterator<T> items) {
        return bar == null ? items : new Iterator<>() {
            @Override
            public boolean hasNext() {
                return items.hasNext();
            }

            @Override
            public T next() {
                T item = items.next();
                bar.step();
                return item;
            }
        };
    }

    /** Marks the work complete: the total becomes the amount done (the expected total was an estimate). */
    void done() {
        if (bar != null) {
            bar.maxHint(bar.getCurrent());
        }
    }

    /** The amount done, and the total, as the bar shows them (-1 for the quiet meter). */
    long current() {
        return bar == null ? -1 : bar.getCurrent();
    }

    long total() {
        return bar == null ? -1 : bar.getMax();
    }

    /** Draws the bar a last time and leaves it on its line. */
    @Override
    public void close() {
        if (bar != null) {
            bar.close();
        }
    }
}
