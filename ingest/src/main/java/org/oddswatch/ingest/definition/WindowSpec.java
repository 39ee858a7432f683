package org.oddswatch.ingest.definition;

import java.time.Duration;
import java.time.Instant;

/** The {@code window} section: {@code width} a whole multiple of {@code step}, ends counted from {@code align}. */
public record WindowSpec(Duration width, Duration step, Duration lateness, Instant align) {
}
