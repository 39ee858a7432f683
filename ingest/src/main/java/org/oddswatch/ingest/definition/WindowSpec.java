package org.oddswatch.ingest.definition;

import java.time.Duration;
import java.time.Instant;
import org.oddswatch.estimator.window.WindowGeometry;

/**
 * The {@code window} section.
 *
 * @param width window width, a positive multiple of {@code step}
 * @param step distance between consecutive window ends (the bucket width)
 * @param lateness how long after a window's end its events are still accepted (default PT0S)
 * @param align the instant window ends are counted from (default 1970-01-01T00:00:00Z)
 */
public record WindowSpec(Duration width, Duration step, Duration lateness, Instant align) {

    public WindowGeometry geometry() {
        return new WindowGeometry(width.toMillis(), step.toMillis(), align.toEpochMilli(), lateness.toMillis());
    }
}
