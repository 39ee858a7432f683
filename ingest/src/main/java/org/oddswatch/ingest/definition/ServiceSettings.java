package org.oddswatch.ingest.definition;

import java.time.Duration;

/**
 * The {@code service} section: settings of the live service only (replay ignores them).
 *
 * @param http address of the HTTP endpoints, {@code host:port} (default {@code 127.0.0.1:8470})
 * @param groupId Kafka consumer group (default {@code oddswatch})
 * @param refresh interval of interim estimates for open windows (default PT30S)
 * @param idleTimeout after this long without records a stream's watermark moves on (default PT5M)
 * @param rebuildMargin extra event time read back when rebuilding state (default PT1H)
 */
public record ServiceSettings(String http, String groupId, Duration refresh, Duration idleTimeout,
                              Duration rebuildMargin) {

    public static ServiceSettings defaults() {
        return new ServiceSettings("127.0.0.1:8470", "oddswatch", Duration.ofSeconds(30), Duration.ofMinutes(5),
                Duration.ofHours(1));
    }
}
