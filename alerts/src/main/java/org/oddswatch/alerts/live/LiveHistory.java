package org.oddswatch.alerts.live;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import java.time.Instant;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Deque;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentChange;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The live page's memory: what this service instance published since it started and what it read
 * back of what was published before and is still current (below), bounded. An
 * {@link OutputSink} fed after the output stage, so it keeps the published JSON text (small cells
 * already withheld) and never a record's values:
 * <ul>
 *   <li>per stream, the last {@value #WINDOWS} final estimates (oldest dropped first) and the newest
 *       interim estimate of the window still open;</li>
 *   <li>the open alert episodes (raised or continuing, the newest message of each; a cleared message
 *       closes its episode), at most {@value #OPEN_ALERTS} (the oldest dropped first);</li>
 *   <li>the last {@value #RECENT_ALERTS} alert messages of any state;</li>
 *   <li>the open incidents (opened or updated, the newest message of each; a resolved message closes
 *       its incident), at most {@value #OPEN_INCIDENTS} (the one updated longest ago dropped first);</li>
 *   <li>the last {@value #RECENT_INCIDENTS} incident messages of any change.</li>
 * </ul>
 * At most {@value #STREAMS} streams are kept; estimates of further streams are counted in
 * {@link #droppedStreams()} and not kept. Memory is therefore bounded by about
 * {@code STREAMS x (WINDOWS + 1)} estimate lines (a few kilobytes each).
 *
 * <p>Written by the thread that runs the pipelines, read by the HTTP threads: every method holds this
 * object's lock for a copy of references, never for I/O.
 *
 * <p>After a restart or a partition hand-over nothing is published again, so the service hands over
 * what it read back ({@code restored...}, as published, small cells withheld as they were): the
 * final estimates of each stream it now holds ({@link #restoredEstimate}: merged by window end with
 * the kept ones, the newest {@value #WINDOWS} kept; a window already kept stays as it is), the open
 * episodes ({@link #restoredAlert}) and the open incidents ({@link #restoredIncident}). They join
 * the open lists, not the recent ones, which hold only what this instance published. When a
 * partition leaves ({@link #released}), its streams keep their estimates here, but their open
 * episodes, and the open incidents all of whose streams are among them, leave the open lists: this
 * instance no longer follows them (their new owner shows them).
 */
public final class LiveHistory implements OutputSink {

    /** Final windows kept per stream. */
    public static final int WINDOWS = 120;
    /** Streams kept. */
    public static final int STREAMS = 1000;
    /** Open alert episodes kept. */
    public static final int OPEN_ALERTS = 500;
    /** Recent alert messages kept. */
    public static final int RECENT_ALERTS = 200;
    /** Open incidents kept (each has at least one open episode, so no more than {@link #OPEN_ALERTS}). */
    public static final int OPEN_INCIDENTS = 500;
    /** Recent incident messages kept. */
    public static final int RECENT_INCIDENTS = 200;

    /** One published output kept: its stream, monitor, window end and JSON text. */
    public record Kept(String stream, String monitor, Instant windowEnd, String json) {
    }

    private static final class StreamHistory {
        final String monitor;
        final Deque<Kept> finals = new ArrayDeque<>();
        Kept open;

        StreamHistory(String monitor) {
            this.monitor = monitor;
        }
    }

    private final Map<String, StreamHistory> streams = new TreeMap<>();
    private final LinkedHashMap<String, Kept> openAlerts = new LinkedHashMap<>();
    private final Deque<Kept> recentAlerts = new ArrayDeque<>();
    private final LinkedHashMap<String, Kept> openIncidents = new LinkedHashMap<>();
    private final Deque<Kept> recentIncidents = new ArrayDeque<>();
    private long droppedStreams;

    @Override
    public synchronized void estimate(WindowEstimate estimate, Published published) {
        StreamHistory stream = history(estimate.stream(), published.monitor());
        if (stream == null) {
            return;
        }
        Kept kept = new Kept(estimate.stream(), published.monitor(), estimate.windowEnd(), published.json());
        if (estimate.status() == WindowStatus.FINAL) {
            Kept newest = stream.finals.peekLast();
            if (newest != null && !estimate.windowEnd().isAfter(newest.windowEnd())) {
                // Sent again (at-least-once after a rebuild): the same window replaces its copy in place.
                replaceSameWindow(stream.finals, kept);
                return;
            }
            stream.finals.addLast(kept);
            if (stream.finals.size() > WINDOWS) {
                stream.finals.removeFirst();
            }
            if (stream.open != null && !stream.open.windowEnd().isAfter(estimate.windowEnd())) {
                stream.open = null;
            }
        } else {
            Kept newest = stream.finals.peekLast();
            if (newest == null || estimate.windowEnd().isAfter(newest.windowEnd())) {
                stream.open = kept;
            }
        }
    }

    /** The stream's history, new if need be; null (counted) when {@value #STREAMS} streams are kept already. */
    private StreamHistory history(String name, String monitor) {
        StreamHistory stream = streams.get(name);
        if (stream == null) {
            if (streams.size() >= STREAMS) {
                droppedStreams++;
                return null;
            }
            stream = new StreamHistory(monitor);
            streams.put(name, stream);
        }
        return stream;
    }

    /**
     * A final estimate read back after a restart: merged into the stream's finals by window end (a
     * window already kept stays as kept: this instance published it since), the oldest beyond
     * {@value #WINDOWS} dropped; an interim estimate not after it is no longer the open window.
     * Interim estimates are ignored.
     */
    @Override
    public synchronized void restoredEstimate(WindowEstimate estimate, Published published) {
        if (estimate.status() != WindowStatus.FINAL) {
            return;
        }
        StreamHistory stream = history(estimate.stream(), published.monitor());
        if (stream == null) {
            return;
        }
        TreeMap<Instant, Kept> merged = new TreeMap<>();
        stream.finals.forEach(k -> merged.put(k.windowEnd(), k));
        merged.putIfAbsent(estimate.windowEnd(),
                new Kept(estimate.stream(), published.monitor(), estimate.windowEnd(), published.json()));
        while (merged.size() > WINDOWS) {
            merged.pollFirstEntry();
        }
        stream.finals.clear();
        stream.finals.addAll(merged.values());
        if (stream.open != null && !stream.open.windowEnd().isAfter(merged.lastKey())) {
            stream.open = null;
        }
    }

    /**
     * The latest message of an episode open before a restart: kept as its open message unless a newer
     * one (a later window) is kept already; a cleared message is ignored. Not added to the recent messages.
     */
    @Override
    public synchronized void restoredAlert(Alert alert, Published published) {
        Kept known = openAlerts.get(alert.id());
        if (alert.state() == AlertState.CLEARED || known != null && known.windowEnd().isAfter(alert.windowEnd())) {
            return;
        }
        restoreOpen(alert.id(), new Kept(alert.stream(), published.monitor(), alert.windowEnd(), published.json()),
                openAlerts, OPEN_ALERTS);
    }

    /**
     * The latest message of an incident read back after a restart or a hand-over, kept as its open
     * message (not as a recent one); a resolved one (another instance resolved it meanwhile) closes it.
     */
    @Override
    public synchronized void restoredIncident(Incident incident, Published published) {
        if (incident.change() == IncidentChange.RESOLVED) {
            openIncidents.remove(incident.id());
        } else {
            restoreOpen(incident.id(), new Kept(incident.streams().get(0), published.monitor(), incident.to(),
                    published.json()), openIncidents, OPEN_INCIDENTS);
        }
    }

    /** Replaces the open item's message in place, or adds it as the newest (see {@link #putNewest}). */
    private static void restoreOpen(String id, Kept kept, LinkedHashMap<String, Kept> open, int cap) {
        if (open.replace(id, kept) == null) {
            putNewest(id, kept, open, cap);
        }
    }

    /** Puts the item as the newest of {@code open}, the one updated longest ago dropped beyond {@code cap}. */
    private static void putNewest(String id, Kept kept, LinkedHashMap<String, Kept> open, int cap) {
        open.remove(id);
        open.put(id, kept);
        if (open.size() > cap) {
            Iterator<String> oldest = open.keySet().iterator();
            oldest.next();
            oldest.remove();
        }
    }

    /**
     * The streams left this instance: their open episodes leave the open list, and so do the open
     * incidents whose every stream is among them; their estimates and the recent messages stay.
     */
    @Override
    public synchronized void released(List<String> released) {
        Set<String> gone = Set.copyOf(released);
        openAlerts.values().removeIf(k -> gone.contains(k.stream()));
        openIncidents.values().removeIf(k -> allAmong(gone, k.json()));
    }

    /** True when every stream of the incident message {@code json} is in {@code streams}. */
    private static boolean allAmong(Set<String> streams, String json) {
        try {
            for (JsonNode stream : Json.mapper().readTree(json).path("streams")) {
                if (!streams.contains(stream.asText())) {
                    return false;
                }
            }
            return true;
        } catch (JsonProcessingException e) {
            throw new IllegalStateException("an incident message kept here is not JSON", e);
        }
    }

    private static void replaceSameWindow(Deque<Kept> finals, Kept kept) {
        List<Kept> copy = new ArrayList<>(finals);
        for (int i = 0; i < copy.size(); i++) {
            if (copy.get(i).windowEnd().equals(kept.windowEnd())) {
                copy.set(i, kept);
                finals.clear();
                finals.addAll(copy);
                return;
            }
        }
    }

    @Override
    public synchronized void alert(Alert alert, Published published) {
        Kept kept = new Kept(alert.stream(), published.monitor(), alert.windowEnd(), published.json());
        keep(alert.id(), kept, alert.state() == AlertState.CLEARED, openAlerts, OPEN_ALERTS, recentAlerts, RECENT_ALERTS);
    }

    /** Kept under its first stream and the latest window end of its episodes ({@link Incident#to()}). */
    @Override
    public synchronized void incident(Incident incident, Published published) {
        Kept kept = new Kept(incident.streams().get(0), published.monitor(), incident.to(), published.json());
        keep(incident.id(), kept, incident.change() == IncidentChange.RESOLVED, openIncidents, OPEN_INCIDENTS,
                recentIncidents, RECENT_INCIDENTS);
    }

    /**
     * Adds a message to {@code recent} (the oldest dropped beyond {@code recentCap}) and, unless it
     * closes its item, makes it the newest entry of {@code open} (the one updated longest ago dropped
     * beyond {@code openCap}); a closing message removes its item from {@code open}.
     */
    private static void keep(String id, Kept kept, boolean closes, LinkedHashMap<String, Kept> open, int openCap,
                             Deque<Kept> recent, int recentCap) {
        recent.addLast(kept);
        if (recent.size() > recentCap) {
            recent.removeFirst();
        }
        if (closes) {
            open.remove(id);
        } else {
            putNewest(id, kept, open, openCap);
        }
    }

    /** The kept streams' names, sorted. */
    public synchronized List<String> streams() {
        return List.copyOf(streams.keySet());
    }

    /** Whether the stream has published anything kept here. */
    public synchronized boolean has(String stream) {
        return streams.containsKey(stream);
    }

    /** The monitor of a kept stream, or null. */
    public synchronized String monitor(String stream) {
        StreamHistory s = streams.get(stream);
        return s == null ? null : s.monitor;
    }

    /** The last {@code n} final estimates of the stream, oldest first (empty for an unknown stream). */
    public synchronized List<Kept> finals(String stream, int n) {
        StreamHistory s = streams.get(stream);
        if (s == null || n <= 0) {
            return List.of();
        }
        List<Kept> all = new ArrayList<>(s.finals);
        return List.copyOf(all.subList(Math.max(0, all.size() - n), all.size()));
    }

    /** The newest final estimate of the stream, or null. */
    public synchronized Kept newestFinal(String stream) {
        StreamHistory s = streams.get(stream);
        return s == null ? null : s.finals.peekLast();
    }

    /** The newest interim estimate of the window after the newest final one, or null. */
    public synchronized Kept open(String stream) {
        StreamHistory s = streams.get(stream);
        return s == null ? null : s.open;
    }

    /** The open episodes' newest messages, in the order they were last updated (oldest first). */
    public synchronized List<Kept> openAlerts() {
        return List.copyOf(openAlerts.values());
    }

    /** The last {@code n} alert messages, newest first. */
    public synchronized List<Kept> recentAlerts(int n) {
        return newestFirst(recentAlerts, n);
    }

    private static List<Kept> newestFirst(Deque<Kept> kept, int n) {
        List<Kept> out = new ArrayList<>(Math.max(0, Math.min(n, kept.size())));
        Iterator<Kept> newestFirst = kept.descendingIterator();
        while (newestFirst.hasNext() && out.size() < n) {
            out.add(newestFirst.next());
        }
        return out;
    }

    /** The open incidents' newest messages, in the order they were last updated (oldest first). */
    public synchronized List<Kept> openIncidents() {
        return List.copyOf(openIncidents.values());
    }

    /** The last {@code n} incident messages, newest first. */
    public synchronized List<Kept> recentIncidents(int n) {
        return newestFirst(recentIncidents, n);
    }

    /** Streams whose estimates were not kept because {@value #STREAMS} streams already were. */
    public synchronized long droppedStreams() {
        return droppedStreams;
    }
}
