package org.oddswatch.alerts.rules;

/**
 * Where one window's (or one chart's) statistic stands relative to a rule's two limits. The gap
 * between the raise limit and the lower clear limit is the hysteresis band.
 */
public enum Zone {
    /** Beyond the raise limit: counts towards raising, keeps an open episode going. */
    BEYOND,
    /** Inside the hysteresis band: neither raises nor counts towards clearing; breaks both runs. */
    BETWEEN,
    /** Back inside the clear limit: counts towards clearing an open episode. */
    INSIDE,
    /** The guard refused the window (too little information): no change, both runs broken. */
    UNKNOWN
}
