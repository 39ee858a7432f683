package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.HashMap;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.function.BiPredicate;

/**
 * Groups alert episodes that agree about one change into incidents, so on-call hears of a change
 * once, with every agreeing rule as evidence, instead of once per rule and stream.
 *
 * <p>An episode's extent runs from the window start of its raising message to the window end of its
 * clearing message, and is open-ended while it is open. Two episodes agree when their streams are
 * related (the same stream, or whatever {@code related} accepts, such as a split stream and its
 * parent monitor) and their extents overlap. Since an incident stays open only while one of its
 * episodes is open, a raised episode joins the oldest open incident holding an episode on a related
 * stream; otherwise it opens a new one. Incidents are never merged, and a resolved incident never
 * reopens: a later episode opens a new incident.
 *
 * <p>Messages, one per change of the incident ({@link #accept} returns at most one):
 * <ul>
 *   <li>{@code opened}: a raised episode with no open agreeing incident;</li>
 *   <li>{@code updated}: a raised episode joins, or one episode clears while others stay open;</li>
 *   <li>{@code resolved}: the last open episode cleared.</li>
 * </ul>
 * A {@code continuing} message refreshes its episode's evidence and the incident's window span
 * without a message. The id comes from the first episode ({@link AlertIds#incidentId}), and the
 * tracker reads no clock: the same alert messages in the same order give the same incidents, live
 * or in replay.
 *
 * <p>After a restart the alerts topic, not the incidents, is the record: {@link #restore} replays the
 * alert messages published before it, so every incident open then goes on with its id, its
 * episodes and its next revision, and its episodes' later messages (a clearing among them) update
 * or resolve it as in an uninterrupted run. Where that record is incomplete (a compacted alerts
 * topic keeps only each episode's newest message), a {@code continuing} message of an episode the
 * tracker does not know opens an incident for it, with the id and revision 1 that episode would
 * have given as first episode, so a receiver that keys on {@code id} and {@code revision} sees a
 * repeat, not a new change; a {@code cleared} message of an unknown episode gives no message.
 *
 * <p>Streams that leave the tracker's owner (a partition revoked or lost, when another instance takes
 * it over) are {@linkplain #release released}: the tracker forgets their episodes, since their later
 * messages are the new owner's to group, and sends nothing. An incident all of whose open episodes
 * were on released streams is forgotten (not resolved: the new owner restores it and resolves it). An
 * incident that also holds an open episode of a kept stream goes on here as a <em>part</em>: what
 * receivers key on stays what a replay gives (its id, from its first episode, released or not; its
 * revision, counting on; its window span), while its evidence and streams keep only the kept
 * episodes. When released streams come back, {@link #restore} takes the read-back record as the
 * truth for the incidents it has a newer revision of: the read-back incident replaces the one held
 * here when its revision is higher, or equal and the held one is a part; an incident the read-back
 * resolved at such a revision is forgotten here. Since the replay inside {@link #restore} counts the
 * revisions from the alert messages as a replay of them does, the next message continues at the
 * revision a replay gives, under the same id. A part can arise only where related streams are read
 * from different partitions (an unsplit monitor reading a topic of several partitions); there each
 * owner sends the messages of its own episodes, so two owners may send the same revision of one
 * incident until one of them restores the other's record.
 */
public final class IncidentTracker {

    private final BiPredicate<String, String> related;
    private final List<OpenIncident> open = new ArrayList<>();
    private final Map<String, OpenIncident> byEpisode = new HashMap<>();

    /** @param related true when episodes on the two streams may describe the same change (need not hold for equal streams) */
    public IncidentTracker(BiPredicate<String, String> related) {
        this.related = related;
    }

    /** A tracker grouping only episodes of the same stream. */
    public static IncidentTracker sameStream() {
        return new IncidentTracker(String::equals);
    }

    /** The incident message this alert message causes, if any. */
    public Optional<Incident> accept(Alert alert) {
        OpenIncident incident = byEpisode.get(alert.id());
        if (incident == null) {
            if (alert.state() == AlertState.CLEARED) {
                return Optional.empty();
            }
            incident = agreeing(alert.stream());
            if (incident == null) {
                incident = new OpenIncident(AlertIds.incidentId(alert.id()), alert.replayCommand());
                open.add(incident);
                incident.record(alert);
                byEpisode.put(alert.id(), incident);
                return Optional.of(incident.message(IncidentChange.OPENED, alert));
            }
            incident.record(alert);
            byEpisode.put(alert.id(), incident);
            return Optional.of(incident.message(IncidentChange.UPDATED, alert));
        }
        incident.record(alert);
        if (alert.state() != AlertState.CLEARED) {
            return Optional.empty();
        }
        if (incident.openEpisodes() > 0) {
            return Optional.of(incident.message(IncidentChange.UPDATED, alert));
        }
        forget(incident);
        return Optional.of(incident.message(IncidentChange.RESOLVED, alert));
    }

    /**
     * Continues the incidents of alert messages published before a restart or a hand-over, without
     * sending any message: the messages are replayed, in window order (their order in
     * {@code published} among equal window ends, as on the alerts topic), through a tracker of the
     * same relation. Then, in the order the replay's incidents opened:
     * <ul>
     *   <li>an incident this tracker holds under the same id is replaced by the replay's when the
     *       replay's revision is higher (another owner went on with it), or equal and the held one is
     *       a part left by {@link #release}; it is forgotten when the replay resolved it at such a
     *       revision. Otherwise the held one stays (it is as new or newer), and so it does when
     *       another incident held here has one of the replay's episodes;</li>
     *   <li>an incident still open in the replay that this tracker does not hold (by id, nor by any
     *       of its episodes) is taken over with its episodes, window span and revision.</li>
     * </ul>
     * Calling it again with the same or an overlapping record (each partition of a topic restores
     * its monitors' alerts) changes nothing. Deterministic: the same record gives the same incidents.
     *
     * @param published alert messages read back from the alerts topics, in the order read
     * @return the incidents taken over, replaced or forgotten
     */
    public int restore(List<Alert> published) {
        return restoreLatest(published).size();
    }

    /**
     * {@link #restore}, giving the latest message of each incident it took over, replaced or forgot:
     * the message of its last change in the replay ({@code resolved} for one forgotten), which is the
     * one published last when the record is complete (the same messages in the same order give the
     * same incidents).
     *
     * @param published alert messages read back from the alerts topics, in the order read
     * @return one message per incident taken over, replaced or forgotten, in the order the incidents opened
     */
    public List<Incident> restoreLatest(List<Alert> published) {
        IncidentTracker replay = new IncidentTracker(related);
        Map<String, Incident> last = new LinkedHashMap<>();
        published.stream().sorted(Comparator.comparing(Alert::windowEnd))
                .forEach(alert -> replay.accept(alert).ifPresent(incident -> last.put(incident.id(), incident)));
        Map<String, OpenIncident> replayOpen = new HashMap<>();
        replay.open.forEach(incident -> replayOpen.put(incident.id, incident));
        List<Incident> changed = new ArrayList<>();
        for (Incident read : last.values()) {
            OpenIncident held = open.stream().filter(o -> o.id.equals(read.id())).findFirst().orElse(null);
            OpenIncident incident = replayOpen.get(read.id());
            boolean newer = held == null
                    || read.revision() > held.revision || read.revision() == held.revision && held.part;
            boolean free = incident == null || incident.episodes.keySet().stream()
                    .allMatch(episode -> byEpisode.getOrDefault(episode, held) == held);
            if (!newer || !free || held == null && incident == null) {
                continue;
            }
            if (held != null) {
                forget(held);
            }
            if (incident != null) {
                open.add(incident);
                incident.episodes.keySet().forEach(episode -> byEpisode.put(episode, incident));
            }
            changed.add(read);
        }
        return changed;
    }

    /**
     * Forgets the episodes of streams that left this tracker's owner, sending no message: an incident
     * all of whose open episodes were on them is forgotten (not resolved); one with an open episode
     * on a kept stream goes on as a part, with the kept episodes only (see the class description).
     *
     * @param streams the streams released (a partition revoked or lost); unknown ones are ignored
     * @return the incidents forgotten
     */
    public int release(Collection<String> streams) {
        Set<String> gone = Set.copyOf(streams);
        int forgotten = 0;
        for (OpenIncident incident : List.copyOf(open)) {
            boolean cut = false;
            for (Iterator<IncidentEvidence> it = incident.episodes.values().iterator(); it.hasNext(); ) {
                IncidentEvidence episode = it.next();
                if (gone.contains(episode.stream())) {
                    it.remove();
                    byEpisode.remove(episode.episode());
                    cut = true;
                }
            }
            if (incident.openEpisodes() == 0) {
                forget(incident);
                forgotten++;
            } else if (cut) {
                incident.part = true;
            }
        }
        return forgotten;
    }

    private void forget(OpenIncident incident) {
        open.remove(incident);
        incident.episodes.keySet().forEach(byEpisode::remove);
    }

    /** Incidents with at least one open episode. */
    public int openIncidents() {
        return open.size();
    }

    private OpenIncident agreeing(String stream) {
        for (OpenIncident incident : open) {
            for (IncidentEvidence e : incident.episodes.values()) {
                if (e.stream().equals(stream) || related.test(e.stream(), stream) || related.test(stream, e.stream())) {
                    return incident;
                }
            }
        }
        return null;
    }

    /** The mutable state of one open incident. */
    private static final class OpenIncident {
        final String id;
        final String replayCommand;
        final Map<String, IncidentEvidence> episodes = new LinkedHashMap<>();
        Instant from;
        Instant to;
        int revision;
        /** True when {@link #release} took some of its episodes away. */
        boolean part;

        OpenIncident(String id, String replayCommand) {
            this.id = id;
            this.replayCommand = replayCommand;
        }

        void record(Alert alert) {
            episodes.put(alert.id(), IncidentEvidence.of(alert));
            from = from == null || alert.windowStart().isBefore(from) ? alert.windowStart() : from;
            to = to == null || alert.windowEnd().isAfter(to) ? alert.windowEnd() : to;
        }

        int openEpisodes() {
            return (int) episodes.values().stream().filter(IncidentEvidence::open).count();
        }

        Incident message(IncidentChange change, Alert cause) {
            revision++;
            List<String> streams = episodes.values().stream().map(IncidentEvidence::stream).distinct().toList();
            List<IncidentEvidence> evidence = List.copyOf(episodes.values());
            String reason = cause.state() + " " + cause.rule() + " (" + cause.subject().label() + ") on "
                    + cause.stream() + ", episode " + cause.id();
            return new Incident(id, revision, change, streams, from, to, openEpisodes(), reason, evidence,
                    IncidentText.compose(id, change, streams, from, to, evidence, reason, replayCommand),
                    replayCommand);
        }
    }
}
