package org.oddswatch.ingest.pipeline;

import java.util.Locale;

/** The one counted outcome every consumed record ends in. */
public enum Outcome {
    /** Counted toward the stream's windows (complete or with missing covariates). */
    ACCEPTED,
    /** Not usable; the reason says why. Sent to rejects. */
    REJECTED,
    /** Its bucket's first window was already final. Sent to rejects. */
    LATE,
    /** Its id was already seen in a bucket still held. Counted only. */
    DUPLICATE;

    /** The lowercase label used in JSON and meters. */
    @Override
    public String toString() {
        return name().toLowerCase(Locale.ROOT);
    }
}
