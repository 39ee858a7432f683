package org.oddswatch.deploy.cli;

import java.time.Duration;

/** Small formatting helpers for console lines. */
final class Texts {

    private Texts() {
    }

    /** ISO-8601 in whole days when possible ({@code P28D} rather than {@code PT672H}). */
    static String duration(Duration d) {
        if (!d.isZero() && d.toMillis() % 86_400_000L == 0) {
            return "P" + d.toDays() + "D";
        }
        return d.toString();
    }
}
