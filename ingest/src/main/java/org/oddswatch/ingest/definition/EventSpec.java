package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.time.Duration;

/**
 * The {@code event} section: where id, time and outcome live in an event.
 *
 * @param maxFutureSkew events later than the stream's watermark plus this are rejected
 *     {@code too-far-in-future} (default P1D)
 */
public record EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, OutcomeSpec outcome) {
}
