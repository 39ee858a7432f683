package org.oddswatch.alerts.live;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.time.Instant;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.function.Predicate;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The newest final estimates of each stream, collected from a read of an estimates topic so that a
 * restarted service shows them on its live page ({@link LiveHistory#restoredEstimate}) without
 * publishing them again. Bounded as the live page is, whatever the length of the read: per stream
 * the {@value LiveHistory#WINDOWS} windows with the latest ends (a window read twice keeps the later
 * copy, as a compacted topic does), at most {@value LiveHistory#STREAMS} streams (the estimates of
 * further streams are passed over and counted in {@link #passedOver()}). Memory is therefore at most
 * {@code STREAMS x WINDOWS} estimate lines, kept as the text read. Interim estimates and estimates of
 * streams that {@code wanted} refuses are passed over without a count. Not thread-safe.
 */
public final class RecentFinals {

    /** One final estimate as read back: the estimate and its JSON text as published. */
    public record Final(WindowEstimate estimate, String json) {
    }

    private final Predicate<String> wanted;
    private final Map<String, TreeMap<Instant, String>> byStream = new HashMap<>();
    private long passedOver;

    /** @param wanted true for the streams whose estimates are kept (those of the monitors being restored) */
    public RecentFinals(Predicate<String> wanted) {
        this.wanted = wanted;
    }

    /**
     * Adds one record value of an estimates topic.
     *
     * @return false when the value is not a window estimate (nothing is kept of it)
     */
    public boolean add(byte[] value) {
        WindowEstimate e = parse(value);
        if (e != null) {
            add(e, value);
        }
        return e != null;
    }

    /** Adds one estimate already read from {@code value} (its record value, kept as the text published). */
    public void add(WindowEstimate e, byte[] value) {
        if (e.status() != WindowStatus.FINAL || !wanted.test(e.stream())) {
            return;
        }
        TreeMap<Instant, String> windows = byStream.get(e.stream());
        if (windows == null) {
            if (byStream.size() >= LiveHistory.STREAMS) {
                passedOver++;
                return;
            }
            windows = new TreeMap<>();
            byStream.put(e.stream(), windows);
        }
        windows.put(e.windowEnd(), new String(value, StandardCharsets.UTF_8));
        if (windows.size() > LiveHistory.WINDOWS) {
            windows.pollFirstEntry();
        }
    }

    /** The kept final estimates of {@code stream}, oldest window first (empty when none). */
    public List<Final> of(String stream) {
        List<Final> out = new ArrayList<>();
        byStream.getOrDefault(stream, new TreeMap<>()).values()
                .forEach(json -> out.add(new Final(parse(json.getBytes(StandardCharsets.UTF_8)), json)));
        return out;
    }

    /** Final estimates not kept because {@value LiveHistory#STREAMS} streams were kept already. */
    public long passedOver() {
        return passedOver;
    }

    /**
     * A record value of an estimates topic read as an estimate (every read-back of estimates uses
     * this), or null when it is not one (not JSON, or no stream or no window end).
     */
    public static WindowEstimate parse(byte[] value) {
        try {
            WindowEstimate e = Json.mapper().readValue(value, WindowEstimate.class);
            return e == null || e.stream() == null || e.windowEnd() == null ? null : e;
        } catch (IOException | RuntimeException ex) {
            return null;
        }
    }
}
