package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.time.Duration;

/**
 * The {@code event} section: where id, time and outcome live in an event.
 *
 * @param maxFutureSkew events later than the stream's watermark plus this are rejected
 *     {@code too-far-in-future} (default P1D)
 * @param futureConfirm how many consecutive events beyond that horizon, all within
 *     {@code maxFutureSkew} of each other, confirm a new time frontier: the last of them is accepted
 *     and moves the watermark, the earlier ones stay rejected (default 3, at least 1)
 */
public record EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, int futureConfirm,
                        OutcomeSpec outcome) {

    /** Default of {@code event.futureConfirm}. */
    public static final int DEFAULT_FUTURE_CONFIRM = 3;

    /** Without {@code futureConfirm} (the default, 3). */
    public EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, OutcomeSpec outcome) {
        this(id, time, maxFutureSkew, DEFAULT_FUTURE_CONFIRM, outcome);
    }
}
