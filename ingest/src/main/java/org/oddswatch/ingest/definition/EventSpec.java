package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonPointer;
import java.time.Duration;

/**
 * The {@code event} section: where id, time and outcome are in an event, and the future rule (an
 * event later than the watermark plus {@code maxFutureSkew} is held until {@code futureConfirm}
 * held events spanning {@code futureSpan} confirm a new frontier, at most {@code futureHold} per
 * stream; the rule in full is in the module README).
 */
public record EventSpec(JsonPointer id, JsonPointer time, Duration maxFutureSkew, int futureConfirm,
                        Duration futureSpan, int futureHold, OutcomeSpec outcome) {
}
