package org.oddswatch.ingest.service;

import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;

/**
 * The thread that applies one polled batch to the pipelines while the poll-loop thread polls and
 * reads the next: at most one batch is in flight, and the poll thread touches pipeline state only
 * after {@link #await()} has returned (which also makes the worker's writes visible to it). Records
 * are applied in the order polled, one batch after the other, so results are exactly those of a
 * single thread; only polling and reading (parsing, decoding: no stream state) overlap with the
 * applying.
 */
final class BatchWorker implements AutoCloseable {

    private final ExecutorService executor;
    private Future<?> inFlight;

    BatchWorker(String threadName) {
        this.executor = Executors.newSingleThreadExecutor(task -> {
            Thread thread = new Thread(task, threadName);
            thread.setDaemon(true);
            return thread;
        });
    }

    /** Starts a batch; the previous one must have been awaited. */
    void submit(Runnable batch) {
        if (inFlight != null) {
            throw new IllegalStateException("a batch is still in flight");
        }
        inFlight = executor.submit(batch);
    }

    /** Whether a batch has been submitted and not awaited yet. */
    boolean hasBatch() {
        return inFlight != null;
    }

    /**
     * Waits for the batch in flight, if any (an interrupt is kept for later: the batch must finish
     * before its state can be used).
     *
     * @return true when there was a batch and it was still running (this thread had to wait)
     * @throws RuntimeException or Error: what the batch threw
     */
    boolean await() {
        Future<?> batch = inFlight;
        if (batch == null) {
            return false;
        }
        inFlight = null;
        boolean waited = !batch.isDone();
        boolean interrupted = false;
        try {
            while (true) {
                try {
                    batch.get();
                    return waited;
                } catch (InterruptedException e) {
                    interrupted = true;
                } catch (ExecutionException e) {
                    Throwable cause = e.getCause();
                    if (cause instanceof RuntimeException r) {
                        throw r;
                    }
                    if (cause instanceof Error err) {
                        throw err;
                    }
                    throw new IllegalStateException("a batch failed", cause);
                }
            }
        } finally {
            if (interrupted) {
                Thread.currentThread().interrupt();
            }
        }
    }

    /** Stops the thread (after {@link #await()}, nothing is running). */
    @Override
    public void close() {
        executor.shutdown();
        try {
            executor.awaitTermination(10, TimeUnit.SECONDS);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
