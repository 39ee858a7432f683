package org.oddswatch.deploy.audit;

import java.time.Instant;
import java.util.Comparator;
import java.util.List;

/**
 * What identifies one alert message: the episode id (a hash of stream, rule, subject and the raising
 * window's end, so one episode keeps one id over its messages), the state and the window end. Ordered
 * by window end, then id, then state in lifecycle order.
 *
 * @param id the episode id
 * @param state {@code raised}, {@code continuing} or {@code cleared}
 * @param windowEnd the end of the message's window
 */
public record MessageKey(String id, String state, Instant windowEnd) implements Comparable<MessageKey> {

    private static final List<String> STATES = List.of("raised", "continuing", "cleared");

    private static final Comparator<MessageKey> ORDER = Comparator.comparing(MessageKey::windowEnd)
            .thenComparing(MessageKey::id)
            .thenComparing(k -> STATES.contains(k.state) ? STATES.indexOf(k.state) : STATES.size())
            .thenComparing(MessageKey::state);

    @Override
    public int compareTo(MessageKey other) {
        return ORDER.compare(this, other);
    }
}
