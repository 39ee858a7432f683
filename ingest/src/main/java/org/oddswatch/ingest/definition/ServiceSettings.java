package org.oddswatch.ingest.definition;

import java.time.Duration;

/** The {@code service} section: settings of the live service only (replay ignores them). */
public record ServiceSettings(String http, String groupId, Duration refresh, Duration idleTimeout,
                              Duration rebuildMargin) {

    public static ServiceSettings defaults() {
        return new ServiceSettings("127.0.0.1:8470", "oddswatch", Duration.ofSeconds(30), Duration.ofMinutes(5),
                Duration.ofHours(1));
    }
}
