package org.oddswatch.alerts.lifecycle;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import java.util.function.Function;
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

    /** The incident messages an uninterrupted tracker of the relation gives for the alerts, as JSON. */
    private static List<String> uninterrupted(IncidentTracker tracker, List<Alert> alerts) {
        return feed(tracker, alerts.toArray(Alert[]::new)).stream().map(Json::write).toList();
    }

    /** A drift episode raised, a CUSUM episode joining, the drift clearing, then the CUSUM: four messages on the stream. */
    private static List<Alert> twoEpisodes(String stream) {
        return List.of(alert(stream, "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2),
                alert(stream, "bernoulli-cusum-up", null, AlertState.RAISED, 3, 3),
                alert(stream, "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 5),
                alert(stream, "bernoulli-cusum-up", null, AlertState.CLEARED, 3, 7));
    }

    /**
     * A partition handed over and back: this instance releases the stream of an open incident (and
     * sends nothing), the other owner goes on with it (an episode clears: revision 3), and when the
     * stream comes back the read-back record is the truth: the next message is revision 4 under the
     * same id, byte for byte the uninterrupted tracker's resolution. Kept without the release, the
     * incident here would still count the cleared episode as open and send a second revision 3.
     */
    @Test
    void aReleasedIncidentIsForgottenAndComesBackAtTheRevisionItsNewOwnerReached() {
        List<Alert> episodes = twoEpisodes("by-region/north");
        Alert drift = episodes.get(0);
        Alert cusum = episodes.get(1);
        Alert driftCleared = episodes.get(2);
        Alert cusumCleared = episodes.get(3);
        List<String> whole = uninterrupted(IncidentTracker.sameStream(), episodes);
        assertEquals(4, whole.size(), String.join("\n", whole));

        IncidentTracker here = IncidentTracker.sameStream();
        assertEquals(whole.subList(0, 2), feed(here, drift, cusum).stream().map(Json::write).toList());
        Alert other = alert("by-region/south", "calibration", null, AlertState.RAISED, 3, 3);
        assertEquals(IncidentChange.OPENED, here.accept(other).orElseThrow().change());
        assertEquals(1, here.release(List.of("by-region/north", "by-region/east")), "north's incident forgotten");
        assertEquals(1, here.openIncidents(), "south's incident stays");

        IncidentTracker newOwner = IncidentTracker.sameStream();
        newOwner.restore(List.of(drift, cusum));
        assertEquals(whole.get(2), Json.write(newOwner.accept(driftCleared).orElseThrow()));

        List<Incident> back = here.restoreLatest(List.of(drift, cusum, other, driftCleared));
        assertEquals(List.of(whole.get(2)), back.stream().map(Json::write).toList(),
                "the newest message read back; south's incident is held here already");
        assertEquals(whole.get(3), Json.write(here.accept(cusumCleared).orElseThrow()), "revision 4, resolved");
        assertEquals(1, here.openIncidents());
    }

    /**
     * An incident taken over from the record of streams another instance holds goes stale here; a
     * later restore with that owner's newer record replaces it (a higher revision) or, when it was
     * resolved meanwhile, forgets it, so the stream's next episode opens a new incident instead of
     * updating the resolved one.
     */
    @Test
    void aRestoreTakesTheReadBackAsTheTruthWhereItsRevisionIsNewer() {
        List<Alert> all = new ArrayList<>(twoEpisodes("programme"));
        Alert drift = all.get(0);
        Alert cusum = all.get(1);
        Alert driftCleared = all.get(2);
        Alert later = alert("programme", "calibration", null, AlertState.RAISED, 12, 12);
        all.add(later);
        List<Incident> messages = feed(IncidentTracker.sameStream(), all.toArray(Alert[]::new));
        assertEquals(List.of(1, 2, 3, 4, 1), messages.stream().map(Incident::revision).toList());
        List<String> whole = messages.stream().map(Json::write).toList();

        IncidentTracker stale = IncidentTracker.sameStream();
        assertEquals(1, stale.restore(List.of(drift)));
        assertEquals(List.of(whole.get(1)), stale.restoreLatest(List.of(drift, cusum)).stream().map(Json::write).toList(),
                "revision 2 read back replaces revision 1");
        assertEquals(whole.get(2), Json.write(stale.accept(driftCleared).orElseThrow()));

        IncidentTracker resolvedElsewhere = IncidentTracker.sameStream();
        resolvedElsewhere.restore(List.of(drift, cusum));
        List<Incident> ended = resolvedElsewhere.restoreLatest(all.subList(0, 4));
        assertEquals(List.of(whole.get(3)), ended.stream().map(Json::write).toList(), "the resolution read back");
        assertEquals(0, resolvedElsewhere.openIncidents());
        assertEquals(whole.get(4), Json.write(resolvedElsewhere.accept(later).orElseThrow()),
                "a new incident, not an update of the resolved one");
        assertEquals(0, resolvedElsewhere.restore(all), "the same record again changes nothing");
    }

    /**
     * An incident of a parent stream and a split stream whose parent is released: it goes on here as
     * a part (same id, next revision, the split stream's evidence only); a part whose kept episodes
     * are all cleared is forgotten; and a read-back at the part's own revision replaces it, so the
     * later messages are the uninterrupted tracker's again.
     */
    @Test
    void anIncidentSpanningKeptAndReleasedStreamsGoesOnAsAPartUntilTheRecordComesBack() {
        Alert parent = alert("programme", "odds-ratio-drift", "household_contact", AlertState.RAISED, 2, 2);
        Alert north = alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.RAISED, 3, 3);
        Alert northOn = alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.CONTINUING, 3, 4);
        Alert northCleared = alert("by-region/north", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 3, 5);
        Alert parentCleared = alert("programme", "odds-ratio-drift", "household_contact", AlertState.CLEARED, 2, 6);
        Function<Alert[], List<String>> whole = alerts -> uninterrupted(
                new IncidentTracker(IncidentTrackerTest::splitAndParent), List.of(alerts));
        List<String> expected = whole.apply(new Alert[] {parent, north, northCleared, parentCleared});

        IncidentTracker part = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        feed(part, parent, north);
        assertEquals(0, part.release(List.of("programme")), "north's episode is still open here");
        assertEquals(Optional.empty(), part.accept(northOn));
        Incident resolved = part.accept(northCleared).orElseThrow();
        Incident first = new IncidentTracker(IncidentTrackerTest::splitAndParent).accept(parent).orElseThrow();
        assertEquals(first.id(), resolved.id(), "the id of the first episode, released or not");
        assertEquals(3, resolved.revision());
        assertEquals(IncidentChange.RESOLVED, resolved.change(), "the part's last open episode cleared");
        assertEquals(List.of("by-region/north"), resolved.streams());
        assertEquals(List.of(north.id()), resolved.evidence().stream().map(IncidentEvidence::episode).toList());
        assertEquals(first.from(), resolved.from(), "the window span stays");

        IncidentTracker closedPart = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        feed(closedPart, parent, north, northCleared);
        assertEquals(1, closedPart.release(List.of("programme")), "only the released parent was open");
        assertEquals(0, closedPart.openIncidents());

        IncidentTracker back = new IncidentTracker(IncidentTrackerTest::splitAndParent);
        feed(back, parent, north);
        back.release(List.of("programme"));
        List<Incident> read = back.restoreLatest(List.of(parent, north));
        assertEquals(List.of(expected.get(1)), read.stream().map(Json::write).toList(),
                "at the part's own revision the whole incident read back replaces it");
        assertEquals(expected.subList(2, 4), feed(back, northCleared, parentCleared).stream().map(Json::write).toList());
    }
}
