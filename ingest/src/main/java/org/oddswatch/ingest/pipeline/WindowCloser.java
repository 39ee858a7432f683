package org.oddswatch.ingest.pipeline;

import java.util.Arrays;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.WindowEstimator;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.estimator.window.WindowGeometry;
import org.oddswatch.estimator.window.WindowStore;

/**
 * Closes the windows of one stream: estimates each window as it becomes final, has it judged
 * ({@link StreamBaseline#judge}), publishes the estimate and then its alerts, and drops the buckets
 * (and their ids) no open window can use. Window {@code e} (end bucket) covers buckets
 * {@code e-k .. e-1}, {@code k = width/step}; only windows holding an event are estimated.
 */
final class WindowCloser {

    private final String stream;
    private final WindowEstimator estimator;
    private final WindowGeometry geometry;
    private final int bucketsPerWindow;
    private final WindowStore store;
    private final DedupeWindow dedupe;
    private final StreamBaseline baseline;
    private final PipelineListener listener;

    /** The end bucket of the newest final window, or {@link Long#MIN_VALUE} before the first. */
    private long newestFinalWindow = Long.MIN_VALUE;
    WindowEstimate lastFinal;
    long finalWindows;
    private double[] warmStart;

    WindowCloser(String stream, WindowEstimator estimator, WindowGeometry geometry, WindowStore store,
                 DedupeWindow dedupe, StreamBaseline baseline, PipelineListener listener) {
        this.stream = stream;
        this.estimator = estimator;
        this.geometry = geometry;
        this.bucketsPerWindow = geometry.bucketsPerWindow();
        this.store = store;
        this.dedupe = dedupe;
        this.baseline = baseline;
        this.listener = listener;
    }

    /** Makes every window ending at or before bucket {@code newFinal} final. */
    void closeThrough(long newFinal, boolean suppress) {
        if (newFinal > newestFinalWindow) {
            baseline.beforeClosing(newFinal);
            long end = newestFinalWindow == Long.MIN_VALUE ? Long.MIN_VALUE : newestFinalWindow + 1;
            while (true) {
                long held = store.oldestBucketFrom(end == Long.MIN_VALUE ? Long.MIN_VALUE : end - bucketsPerWindow);
                if (held == Long.MAX_VALUE) {
                    break;
                }
                end = Math.max(end, held + 1);
                if (end > newFinal) {
                    break;
                }
                closeWindow(end, suppress);
                end++;
            }
            newestFinalWindow = newFinal;
            store.expireBefore(newFinal + 1 - bucketsPerWindow);
            dedupe.expireBefore(newFinal + 1 - bucketsPerWindow);
            if (baseline.judging() && !suppress) {
                listener.onCusum(stream, baseline.cusumReadings());
            }
        }
    }

    /** End of input: every window that holds events becomes final. */
    void closeAll() {
        long newest = store.bucketCount() == 0 ? newestFinalWindow : store.newestBucket();
        closeThrough(newest + bucketsPerWindow, false);
        if (baseline.judging()) {
            listener.onCusum(stream, baseline.cusumReadings());
        }
    }

    /** An interim estimate of the window holding the watermark, unless that window is final. */
    void emitInterim(long watermark) {
        long end = watermark == Long.MIN_VALUE ? Long.MIN_VALUE : geometry.bucketOf(watermark) + 1;
        if (end > newestFinalWindow) { // never before the first event
            listener.onEstimate(estimate(end, WindowStatus.INTERIM));
        }
    }

    private WindowEstimate estimate(long end, WindowStatus status) {
        return estimator.estimate(stream, geometry.windowStart(end), geometry.windowEnd(end), status,
                store.window(end - bucketsPerWindow, end), warmStart, baseline.model());
    }

    private void closeWindow(long end, boolean suppress) {
        long fitStart = System.nanoTime(); // for the fit-duration meter only; never part of the output
        WindowEstimate estimate = estimate(end, WindowStatus.FINAL);
        long fitNanos = System.nanoTime() - fitStart;
        warmStart = reproducibleStart(estimator.coefficientVector(estimate));
        lastFinal = estimate;
        finalWindows++;
        StreamBaseline.Judged judged = baseline.judge(estimate);
        if (!suppress) { // the estimate (with its chart values) before the window's alerts
            listener.onEstimate(judged.published());
            listener.onFinalFit(judged.published(), fitNanos);
            for (Alert alert : judged.alerts()) {
                listener.onAlert(alert);
            }
        }
    }

    /**
     * The next window's warm start: the coefficients rounded to single precision, so that a stream
     * rebuilt after a restart (older windows may differ in the last bits) gives the same estimate.
     */
    static double[] reproducibleStart(double[] coefficients) {
        return coefficients == null ? null : Arrays.stream(coefficients).map(c -> (float) c).toArray();
    }
}
