package org.oddswatch.ingest.service;

/**
 * How many of a batch's records the poll thread reads itself; the worker reads the rest before it
 * applies the batch. Reading (parsing, decoding) is the larger part of the work and needs no
 * stream state, so it can go to whichever thread would otherwise wait. A feedback rule keeps the
 * two threads about equally busy: when the poll thread had to wait for the worker, it takes a larger
 * share of the next batches; when the worker was already done, a smaller one. Steps of 1/64
 * between 0 and 1, starting at one half. Only the split of work changes, never a result: records
 * are applied in poll order whoever read them.
 */
final class ReadShare {

    private static final int STEPS = 64;
    private int share = STEPS / 2;

    /** The number of the first records of a batch of {@code size} that the poll thread reads. */
    int of(int size) {
        return (int) ((long) size * share / STEPS);
    }

    /** @param pollThreadWaited whether the poll thread had to wait for the worker's last batch */
    void adjust(boolean pollThreadWaited) {
        if (pollThreadWaited) {
            share = Math.min(STEPS, share + 1);
        } else {
            share = Math.max(0, share - 1);
        }
    }

    /** The current share, 0 to 1 (for tests and status). */
    double fraction() {
        return share / (double) STEPS;
    }
}
