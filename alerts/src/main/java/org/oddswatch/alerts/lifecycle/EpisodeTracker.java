package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.HashMap;
import java.util.Map;
import org.oddswatch.alerts.rules.Reading;

/**
 * Turns each rule-and-subject's run of readings into episode transitions, with hysteresis:
 * <ul>
 *   <li>{@code BEYOND}: extends the run beyond the limit (a change of direction restarts it at 1)
 *       and breaks the clearing run; when closed and the run reaches k, the episode is raised;
 *       when open, the episode continues (one message per reading, so at most one per final window);</li>
 *   <li>{@code INSIDE}: breaks the beyond run; when open, extends the clearing run, and at m the
 *       episode is cleared;</li>
 *   <li>{@code BETWEEN} and {@code UNKNOWN}: break both runs; no message.</li>
 * </ul>
 * A transition whose reading ends at or before the last message already published for that key
 * (known from {@link #restore}) updates the state but is not emitted, so a rebuild that re-reads
 * old data after a restart sends nothing twice.
 */
public final class EpisodeTracker {

    private final String stream;
    private final Map<String, Episode> episodes = new HashMap<>();

    public EpisodeTracker(String stream) {
        this.stream = stream;
    }

    /** A transition to publish, or null. */
    public Transition step(Reading r) {
        Episode ep = episodes.computeIfAbsent(r.key(), k -> new Episode());
        AlertState state = null;
        switch (r.zone()) {
            case BEYOND -> {
                ep.insideRun = 0;
                ep.beyondRun = ep.direction == r.direction() || ep.directionUnknown ? ep.beyondRun + 1 : 1;
                ep.direction = r.direction();
                ep.directionUnknown = false;
                if (ep.restoredRun > 0 && r.windowEnd().equals(ep.publishedUpTo)) {
                    // the reading of the newest message published: its run is the message's own
                    ep.beyondRun = ep.restoredRun;
                }
                if (ep.open) {
                    state = AlertState.CONTINUING;
                } else if (ep.beyondRun >= r.raiseAfter()) {
                    ep.open = true;
                    ep.id = AlertIds.episodeId(stream, r.rule(), r.subject(), r.windowEnd());
                    state = AlertState.RAISED;
                }
            }
            case INSIDE -> {
                ep.beyondRun = 0;
                ep.direction = 0;
                ep.directionUnknown = false;
                if (ep.open && ++ep.insideRun >= r.clearAfter()) {
                    ep.open = false;
                    ep.insideRun = 0;
                    state = AlertState.CLEARED;
                }
            }
            default -> {
                ep.beyondRun = 0;
                ep.direction = 0;
                ep.directionUnknown = false;
                ep.insideRun = 0;
            }
        }
        if (state == null) {
            return null;
        }
        int run = state == AlertState.CLEARED ? r.clearAfter() : ep.beyondRun;
        boolean replayed = ep.publishedUpTo != null && !r.windowEnd().isAfter(ep.publishedUpTo);
        if (!replayed) {
            ep.publishedUpTo = r.windowEnd();
        }
        return new Transition(ep.id, state, run, replayed);
    }

    /** Marks an episode as published up to {@code windowEnd}, open or not (from the alerts topic). */
    public void restore(String key, String id, boolean open, Instant windowEnd) {
        restore(key, id, open, windowEnd, 0);
    }

    /**
     * Marks an episode as published up to {@code windowEnd}, open or not, with the run of readings
     * beyond the limit that the newest message named ({@code consecutiveWindows}; 0 for a clearing).
     * The run stands as it was after that message: a later reading beyond the limit extends it, and a
     * replayed reading of that message's own window sets it to the message's run again, so the runs
     * (and the {@code consecutiveWindows} of later messages) are those of an uninterrupted run even
     * when the rebuild re-feeds fewer readings than the run is long.
     */
    public void restore(String key, String id, boolean open, Instant windowEnd, int run) {
        Episode ep = episodes.computeIfAbsent(key, k -> new Episode());
        ep.id = id;
        ep.open = open;
        ep.beyondRun = open ? run : 0;
        ep.restoredRun = open ? run : 0;
        ep.directionUnknown = open && run > 0;
        ep.insideRun = 0;
        ep.direction = 0;
        if (ep.publishedUpTo == null || windowEnd.isAfter(ep.publishedUpTo)) {
            ep.publishedUpTo = windowEnd;
        }
    }

    /** The window end of the newest message published for this key (restored or stepped), or null. */
    public Instant publishedUpTo(String key) {
        Episode ep = episodes.get(key);
        return ep == null ? null : ep.publishedUpTo;
    }

    /**
     * One transition.
     *
     * @param run readings in a row that led to it (beyond the limit, or inside the clear limit)
     * @param alreadyPublished true when a message for this key and a later or equal window was already
     *     published before a restart: the caller must not publish it again
     */
    public record Transition(String id, AlertState state, int run, boolean alreadyPublished) {
    }

    private static final class Episode {
        String id;
        boolean open;
        int beyondRun;
        int direction;
        int insideRun;
        Instant publishedUpTo;
        /** The run the newest restored message named, and whether the run's direction is still to be seen. */
        int restoredRun;
        boolean directionUnknown;
    }
}
