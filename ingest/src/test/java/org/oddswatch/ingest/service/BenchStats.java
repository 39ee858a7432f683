package org.oddswatch.ingest.service;

import java.util.Arrays;

/** Summaries of repeated benchmark measurements. */
final class BenchStats {

    private BenchStats() {
    }

    static double best(double[] values) {
        return Arrays.stream(values).max().orElseThrow();
    }

    static double lowest(double[] values) {
        return Arrays.stream(values).min().orElseThrow();
    }

    /** The middle value (the upper one of the two middle values of an even count). */
    static double median(double[] values) {
        double[] sorted = values.clone();
        Arrays.sort(sorted);
        return sorted[sorted.length / 2];
    }
}
