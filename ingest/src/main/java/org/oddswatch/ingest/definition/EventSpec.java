package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.time.Duration;

/**
 * The {@code event} section: where id, time and outcome live in an event, and the future rule.
 *
 * <p>The future rule: an event later than the stream's watermark plus {@code maxFutureSkew} is
 * held, not applied. Held events confirm a new time frontier when {@code futureConfirm} of them with
 * distinct ids form a chain (sorted by time, each within {@code maxFutureSkew} of the one before)
 * spanning at least {@code futureSpan} of event time; every held event up to the chain's latest is
 * then applied, in arrival order. A held event is rejected {@code too-far-in-future} when the
 * stream's watermark moves on by {@code futureSpan} without it (the stream carried on in the
 * present: a typo), when the hold is full ({@code futureHold}, the oldest goes), or at the end of
 * the input.
 *
 * @param maxFutureSkew the horizon beyond the watermark (default P1D)
 * @param futureConfirm distinct held events needed to confirm a new frontier (default 5, at least 2)
 * @param futureSpan event time the confirming chain must span, and the watermark advance that
 *     dismisses a held event (default PT1H)
 * @param futureHold most events held per stream (default 1000)
 */
public record EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, int futureConfirm,
                        Duration futureSpan, int futureHold, OutcomeSpec outcome) {

    /** Default of {@code event.maxFutureSkew}. */
    public static final Duration DEFAULT_MAX_FUTURE_SKEW = Duration.ofDays(1);
    /** Default of {@code event.futureConfirm}. */
    public static final int DEFAULT_FUTURE_CONFIRM = 5;
    /** Default of {@code event.futureSpan}. */
    public static final Duration DEFAULT_FUTURE_SPAN = Duration.ofHours(1);
    /** Default of {@code event.futureHold}. */
    public static final int DEFAULT_FUTURE_HOLD = 1000;

    /** With the defaults of the future rule. */
    public EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, OutcomeSpec outcome) {
        this(id, time, maxFutureSkew, DEFAULT_FUTURE_CONFIRM, DEFAULT_FUTURE_SPAN, DEFAULT_FUTURE_HOLD, outcome);
    }
}
