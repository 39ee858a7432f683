package org.oddswatch.ingest.definition;

import java.time.Duration;
import java.time.Instant;
import org.oddswatch.estimator.window.WindowGeometry;

/** The {@code window} section: {@code width} a whole multiple of {@code step}, ends counted from {@code align}. */
public record WindowSpec(Duration width, Duration step, Duration lateness, Instant align) {

    public WindowGeometry geometry() {
        return new WindowGeometry(width.toMillis(), step.toMillis(), align.toEpochMilli(), lateness.toMillis());
    }
}
