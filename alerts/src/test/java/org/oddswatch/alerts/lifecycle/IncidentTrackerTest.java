package org.oddswatch.alerts.lifecycle;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.rules.Measurement;

/** Incident grouping on constructed alert sequences. */
class IncidentTrackerTest {

    private static final Instant T0 = Instant.parse("2026-04-06T00:00:00Z");
    private static final Duration WEEK = Duration.ofDays(7);

    /** Split streams of {@code by-region} and the unsplit parent {@code programme}. */
    private static boolean splitAndParent(String a, String b) {
        return a.equals("programme") && b.startsWith("by-region/") || b.equals("programme") && a.startsWith("by-region/");
    }

    private static Alert alert(String stream, String rule, String term, AlertState state, int raisedWeek, int week) {
        AlertSubject subject = term == null ? AlertSubject.calibration() : new AlertSubject(term, "yes");
        Instant raisedEnd = T0.plus(WEEK.multipliedBy(raisedWeek + 1L));
        String id = AlertIds.episodeId(stream, rule, subject, raisedEnd);
        Instant start = T0.plus(WEEK.multipliedBy(week));
        Measurement.Side side = state == AlertState.CLEARED ? Measurement.Side.WITHIN : Measurement.Side.ABOVE;
        return new Alert(id, stream, rule, subject, state, start, start.plus(WEEK), "odds-ratio-z", 3.4, side, 2.1,
                1.0, 3.0, 2.0, new Evidence(3.4, null, null, null, 1), 2000, "message", "oddswatch replay x");
    }

    private static List<Incident> feed(IncidentTracker tracker, Alert... alerts) {
        List<Incident> out = new ArrayList<>();
        for (Alert a : alerts) {
            tracker.accept(a).ifPresent(out::add);
        }
        return out;
    }

    @Test
    void agreeingRulesOnOneStreamAreOneIncidentThatResolvesWhenTheLastEpisodeEnds() {
        Alert drift = alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2);
        Alert cusum = alert("programme", "bernoulli-cusum-up", null, AlertState.RAISED, 3, 3);
        List<Incident> got = feed(IncidentTracker.sameStream(),
                drift,
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.CONTINUING, 2, 3),
                cusum,
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.CONTINUING, 2, 4),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 6),
                alert("programme", "bernoulli-cusum-up", null, AlertState.CLEARED, 3, 7));
        assertEquals(List.of(IncidentChange.OPENED, IncidentChange.UPDATED, IncidentChange.UPDATED,
                IncidentChange.RESOLVED), got.stream().map(Incident::change).toList(), "continuing messages send nothing");
        assertEquals(1, got.stream().map(Incident::id).distinct().count(), "one incident");
        assertEquals(AlertIds.incidentId(drift.id()), got.get(0).id(), "id from the first episode");
        assertNotEquals(drift.id(), got.get(0).id());
        assertEquals(List.of(1, 2, 3, 4), got.stream().map(Incident::revision).toList());
        Incident joined = got.get(1);
        assertEquals(List.of(drift.id(), cusum.id()), joined.evidence().stream().map(IncidentEvidence::episode).toList(),
                "every agreeing rule is evidence, in joining order");
        assertEquals(AlertState.CONTINUING, joined.evidence().get(0).state(), "the drift episode's latest message");
        assertEquals(2, joined.openEpisodes());
        assertEquals(1, got.get(2).openEpisodes(), "the drift cleared, the CUSUM goes on");
        Incident resolved = got.get(3);
        assertEquals(0, resolved.openEpisodes());
        assertEquals(T0.plus(WEEK.multipliedBy(2)), resolved.from());
        assertEquals(T0.plus(WEEK.multipliedBy(8)), resolved.to());
        assertTrue(resolved.message().contains(AlertText.CAUTION), resolved.message());
    }

    @Test
    void aSplitStreamAndItsParentAgreeButTwoSplitStreamsDoNot() {
        IncidentTracker tracker = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        List<Incident> got = feed(tracker,
                alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
                alert("by-region/south", "calibration", null, AlertState.RAISED, 3, 3),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 3, 3));
        assertEquals(List.of(IncidentChange.OPENED, IncidentChange.OPENED, IncidentChange.UPDATED),
                got.stream().map(Incident::change).toList(), "north and south are separate changes");
        assertNotEquals(got.get(0).id(), got.get(1).id());
        assertEquals(got.get(0).id(), got.get(2).id(), "the parent joins the oldest agreeing incident, north's");
        assertEquals(List.of("by-region/north", "programme"), got.get(2).streams());
        assertEquals(2, tracker.openIncidents());
        // Only the relation decides: without it the parent's episode is an incident of its own.
        List<Incident> apart = feed(IncidentTracker.sameStream(),
                alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 3, 3));
        assertEquals(List.of(IncidentChange.OPENED, IncidentChange.OPENED), apart.stream().map(Incident::change).toList());
    }

    @Test
    void episodesThatDoNotOverlapAreTwoIncidents() {
        List<Incident> got = feed(IncidentTracker.sameStream(),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 4),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 9, 9));
        assertEquals(List.of(IncidentChange.OPENED, IncidentChange.RESOLVED, IncidentChange.OPENED),
                got.stream().map(Incident::change).toList());
        assertNotEquals(got.get(0).id(), got.get(2).id());
        assertEquals(1, got.get(2).revision());
    }

    @Test
    void aRestartedTrackerOpensTheSameIdForAContinuingFirstEpisodeAndIgnoresAnUnknownClearing() {
        Alert raised = alert("programme", "calibration", null, AlertState.RAISED, 2, 2);
        Incident original = IncidentTracker.sameStream().accept(raised).orElseThrow();
        IncidentTracker restarted = IncidentTracker.sameStream();
        Incident again = restarted.accept(alert("programme", "calibration", null, AlertState.CONTINUING, 2, 5)).orElseThrow();
        assertEquals(original.id(), again.id());
        assertEquals(original.revision(), again.revision());
        assertEquals(Optional.empty(), IncidentTracker.sameStream()
                .accept(alert("programme", "calibration", null, AlertState.CLEARED, 2, 6)));
    }

    @Test
    void theSameAlertsGiveByteIdenticalIncidents() {
        Alert[] alerts = {
            alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
            alert("programme", "calibration", null, AlertState.RAISED, 3, 3),
            alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 5),
            alert("programme", "calibration", null, AlertState.CLEARED, 3, 6)};
        List<String> first = feed(new IncidentTracker(IncidentTrackerTest::splitAndParent), alerts).stream()
                .map(Json::write).toList();
        List<String> second = feed(new IncidentTracker(IncidentTrackerTest::splitAndParent), alerts).stream()
                .map(Json::write).toList();
        assertEquals(4, first.size());
        assertEquals(first, second);
        assertTrue(first.get(0).startsWith("{\"id\":\"") && first.get(0).contains("\"change\":\"opened\""), first.get(0));
        assertTrue(first.get(3).contains("\"change\":\"resolved\""), first.get(3));
    }

    /**
     * A restart between any two messages: a tracker restored from the messages before it (restored
     * twice, as two partitions of one topic do) gives, for the messages after it, the very incident
     * messages of the uninterrupted tracker: same ids, revisions and text; the clearing resolves.
     */
    @Test
    void aRestoredTrackerContinuesEveryOpenIncidentAsIfUninterrupted() {
        List<Alert> alerts = List.of(
                alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
                alert("programme", "calibration", null, AlertState.RAISED, 3, 3),
                alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.CONTINUING, 2, 3),
                alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 5),
                alert("programme", "calibration", null, AlertState.CONTINUING, 3, 5),
                alert("by-region/south", "odds-ratio-drift", "household_contact", AlertState.RAISED, 5, 5),
                alert("programme", "calibration", null, AlertState.CLEARED, 3, 7),
                alert("by-region/south", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 5, 8));
        List<String> uninterrupted = new ArrayList<>();
        IncidentTracker whole = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        List<Integer> messageAt = new ArrayList<>();
        for (int i = 0; i < alerts.size(); i++) {
            int at = i;
            whole.accept(alerts.get(i)).ifPresent(incident -> {
                uninterrupted.add(Json.write(incident));
                messageAt.add(at);
            });
        }
        assertEquals(6, uninterrupted.size(), String.join("\n", uninterrupted));
        for (int cut = 1; cut < alerts.size(); cut++) {
            IncidentTracker restarted = new IncidentTracker(IncidentTrackerTest::splitAndParent);
            restarted.restore(alerts.subList(0, cut));
            assertEquals(0, restarted.restore(alerts.subList(0, cut)), "a second restore takes nothing over");
            List<String> after = new ArrayList<>();
            for (Alert a : alerts.subList(cut, alerts.size())) {
                restarted.accept(a).ifPresent(incident -> after.add(Json.write(incident)));
            }
            int firstAfter = cut;
            int skipped = (int) messageAt.stream().filter(i -> i < firstAfter).count();
            assertEquals(uninterrupted.subList(skipped, uninterrupted.size()), after, "restart after message " + cut);
        }
        // without the restore the first episode's clearing would be lost (the old behaviour)
        IncidentTracker forgetful = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        assertEquals(Optional.empty(), forgetful.accept(alerts.get(3)));
    }

    @Test
    void restoringTheSameRecordGivesTheSameIncidents() {
        List<Alert> record = List.of(
                alert("programme", "calibration", null, AlertState.RAISED, 3, 3),
                alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 4, 4));
        IncidentTracker a = IncidentTracker.sameStream();
        IncidentTracker b = IncidentTracker.sameStream();
        assertEquals(1, a.restore(record));
        b.restore(record);
        Alert next = alert("programme", "calibration", null, AlertState.CLEARED, 3, 6);
        assertEquals(Json.write(a.accept(next).orElseThrow()), Json.write(b.accept(next).orElseThrow()));
        assertEquals(1, a.openIncidents());
    }
}
