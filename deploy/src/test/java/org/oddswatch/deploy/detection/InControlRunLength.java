package org.oddswatch.deploy.detection;

import java.util.SplittableRandom;

/**
 * A detector whose in-control run length (events to a false signal) the harness both computes and
 * simulates, for the table comparing the two. A new sequential detector plugs in by implementing
 * this and adding itself to {@code DetectionQualityBenchmark.RUN_LENGTHS}.
 */
interface InControlRunLength {

    /** The detector and its settings, for the table. */
    String label();

    /** The in-control average run length, computed (not simulated), in events. */
    double computed();

    /** One simulated in-control run length, in events, drawn with {@code rng}. */
    long simulateOnce(SplittableRandom rng);
}
