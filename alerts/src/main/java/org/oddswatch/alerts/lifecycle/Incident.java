package org.oddswatch.alerts.lifecycle;

import java.time.Instant;
import java.util.List;

/**
 * One message about an incident: the episodes that agree about one change, as on-call receives them
 * (log, webhook, a replay's {@code incidents.jsonl}). Component names are the JSON field names, in
 * this order. The episodes themselves stay unchanged on the alerts topic.
 *
 * @param id deterministic incident id, derived from its first episode's id
 *     ({@link IncidentTracker#incidentId})
 * @param revision 1 for the opening message, one more for each later message of the incident
 * @param change opened, updated or resolved
 * @param streams the streams of its episodes, in the order they joined
 * @param from the earliest window start of its episodes' messages
 * @param to the latest window end of its episodes' messages
 * @param openEpisodes episodes not yet cleared (0 when resolved)
 * @param reason for an update or resolution, which episode joined or ended; for an opening, the first episode
 * @param evidence every episode, in the order it joined, as its latest message left it
 * @param message one paragraph for on-call, with the investigation caution
 * @param replayCommand the replay command of the first episode
 */
public record Incident(String id, int revision, IncidentChange change, List<String> streams, Instant from,
                       Instant to, int openEpisodes, String reason, List<IncidentEvidence> evidence, String message,
                       String replayCommand) {

    public Incident {
        streams = List.copyOf(streams);
        evidence = List.copyOf(evidence);
    }

}
