package org.oddswatch.alerts.live;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertIds;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The live page's memory: bounded per stream (the oldest final window goes first), the open window
 * replaced by each interim estimate and dropped once its window is final, an estimate sent again
 * replacing its copy, open episodes closed by their cleared message, open incidents closed by their
 * resolved message, recent messages of both bounded, and at most {@value LiveHistory#STREAMS} streams.
 */
class LiveHistoryTest {

    static Published published(WindowEstimate e) {
        return new Published("respiratory", e.stream() + "|" + e.windowEnd(), "{\"windowEnd\":\"" + e.windowEnd()
                + "\",\"status\":\"" + e.status() + "\"}");
    }

    static WindowEstimate week(String stream, int week, WindowStatus status) {
        WindowEstimate w = Fixtures.window(week, 0.7, 0.2);
        return new WindowEstimate(stream, w.windowStart(), w.windowEnd(), status, w.events(), w.cases(),
                w.prevalence(), w.strata(), w.fit(), w.coefficients(), w.calibration(), w.notes());
    }

    static Alert alert(String id, AlertState state, int week) {
        return alert(Fixtures.STREAM, id, state, week, 2010);
    }

    static Alert alert(String stream, String id, AlertState state, int week, long events) {
        Instant end = Fixtures.start(week + 1);
        return new Alert(id, stream, "odds-ratio-drift", new AlertSubject("household_contact", "yes"), state,
                Fixtures.start(week), end, "odds-ratio-z", 4.2, null, 3.1, 2.0, 3.5, 2.0, null, events,
                "message " + id + " " + state, "oddswatch replay ...");
    }

    static Published published(Alert a) {
        return new Published("respiratory", a.id(), "{\"id\":\"" + a.id() + "\",\"state\":\"" + a.state() + "\"}");
    }

    @Test
    void keepsTheLastWindowsPerStreamOldestDroppedFirst() {
        LiveHistory history = new LiveHistory();
        int sent = LiveHistory.WINDOWS + 7;
        for (int i = 0; i < sent; i++) {
            WindowEstimate e = week("a", i, WindowStatus.FINAL);
            history.estimate(e, published(e));
        }
        List<LiveHistory.Kept> all = history.finals("a", 10_000);
        assertEquals(LiveHistory.WINDOWS, all.size());
        assertEquals(Fixtures.start(8), all.get(0).windowEnd(), "the 7 oldest windows are gone");
        assertEquals(Fixtures.start(sent), all.get(all.size() - 1).windowEnd());
        List<LiveHistory.Kept> three = history.finals("a", 3);
        assertEquals(List.of(Fixtures.start(sent - 2), Fixtures.start(sent - 1), Fixtures.start(sent)),
                three.stream().map(LiveHistory.Kept::windowEnd).toList(), "the last three, oldest first");
        assertEquals(List.of(), history.finals("unknown", 3));
    }

    @Test
    void theOpenWindowIsTheNewestInterimAfterTheNewestFinal() {
        LiveHistory history = new LiveHistory();
        WindowEstimate final0 = week("a", 0, WindowStatus.FINAL);
        history.estimate(final0, published(final0));
        WindowEstimate interim1 = week("a", 1, WindowStatus.INTERIM);
        history.estimate(interim1, published(interim1));
        assertEquals(interim1.windowEnd(), history.open("a").windowEnd());
        WindowEstimate lateInterim0 = week("a", 0, WindowStatus.INTERIM);
        history.estimate(lateInterim0, published(lateInterim0));
        assertEquals(interim1.windowEnd(), history.open("a").windowEnd(), "an interim of a final window is not the open one");
        WindowEstimate final1 = week("a", 1, WindowStatus.FINAL);
        history.estimate(final1, published(final1));
        assertNull(history.open("a"), "its window is final now");
        assertEquals(final1.windowEnd(), history.newestFinal("a").windowEnd());
    }

    @Test
    void aFinalEstimateSentAgainReplacesItsCopy() {
        LiveHistory history = new LiveHistory();
        for (int i = 0; i < 3; i++) {
            WindowEstimate e = week("a", i, WindowStatus.FINAL);
            history.estimate(e, published(e));
        }
        WindowEstimate again = week("a", 1, WindowStatus.FINAL);
        history.estimate(again, new Published("respiratory", "k", "{\"again\":true}"));
        List<LiveHistory.Kept> all = history.finals("a", 10);
        assertEquals(3, all.size());
        assertEquals("{\"again\":true}", all.get(1).json());
    }

    @Test
    void aClearedMessageClosesItsEpisodeAndRecentMessagesAreBounded() {
        LiveHistory history = new LiveHistory();
        Alert raised = alert("e1", AlertState.RAISED, 3);
        history.alert(raised, published(raised));
        Alert other = alert("e2", AlertState.RAISED, 3);
        history.alert(other, published(other));
        Alert continuing = alert("e1", AlertState.CONTINUING, 4);
        history.alert(continuing, published(continuing));
        assertEquals(List.of("e2", "e1"), history.openAlerts().stream().map(k -> k.json().substring(7, 9)).toList(),
                "one message per open episode, the last updated last");
        assertTrue(history.openAlerts().get(1).json().contains("continuing"));
        Alert cleared = alert("e1", AlertState.CLEARED, 5);
        history.alert(cleared, published(cleared));
        assertEquals(1, history.openAlerts().size());
        assertEquals(4, history.recentAlerts(10).size());
        assertTrue(history.recentAlerts(1).get(0).json().contains("cleared"), "newest first");
        for (int i = 0; i < LiveHistory.RECENT_ALERTS + 5; i++) {
            Alert a = alert("x" + i, AlertState.CLEARED, 6);
            history.alert(a, published(a));
        }
        assertEquals(LiveHistory.RECENT_ALERTS, history.recentAlerts(10_000).size());
        for (int i = 0; i < LiveHistory.OPEN_ALERTS + 3; i++) {
            Alert a = alert("o" + i, AlertState.RAISED, 6);
            history.alert(a, published(a));
        }
        assertEquals(LiveHistory.OPEN_ALERTS, history.openAlerts().size());
    }

    /** Feeds the alert to the history and the incident message it causes, as the output stage does. */
    static void publishWithIncident(LiveHistory history, IncidentTracker tracker, Alert a) {
        history.alert(a, published(a));
        tracker.accept(a).ifPresent(i -> history.incident(i, new Published("respiratory", i.id(), Json.write(i))));
    }

    private static List<String> changes(List<LiveHistory.Kept> kept) throws Exception {
        List<String> out = new ArrayList<>();
        for (LiveHistory.Kept k : kept) {
            JsonNode n = Json.mapper().readTree(k.json());
            out.add(n.get("id").asText() + " " + n.get("change").asText() + " " + n.get("revision").asInt());
        }
        return out;
    }

    @Test
    void aResolvedMessageClosesItsIncidentAndIncidentMessagesAreBounded() throws Exception {
        LiveHistory history = new LiveHistory();
        IncidentTracker tracker = IncidentTracker.sameStream();
        publishWithIncident(history, tracker, alert("a", "e1", AlertState.RAISED, 3, 2010));
        publishWithIncident(history, tracker, alert("b", "e2", AlertState.RAISED, 3, 2010));
        publishWithIncident(history, tracker, alert("a", "e3", AlertState.RAISED, 4, 2010));
        String a = AlertIds.incidentId("e1");
        String b = AlertIds.incidentId("e2");
        assertEquals(List.of(b + " opened 1", a + " updated 2"), changes(history.openIncidents()),
                "the newest message of each open incident, the last updated last");
        assertEquals("a", history.openIncidents().get(1).stream(), "kept under its first stream");
        assertEquals(Fixtures.start(5), history.openIncidents().get(1).windowEnd(), "the latest window end of its episodes");
        publishWithIncident(history, tracker, alert("b", "e2", AlertState.CLEARED, 5, 2010));
        assertEquals(List.of(a + " updated 2"), changes(history.openIncidents()), "resolved: no longer open");
        assertEquals(List.of(b + " resolved 2", a + " updated 2", b + " opened 1", a + " opened 1"),
                changes(history.recentIncidents(10)), "newest first");
        assertEquals(List.of(b + " resolved 2"), changes(history.recentIncidents(1)));
        assertEquals(List.of(), history.recentIncidents(0));

        for (int i = 0; i < LiveHistory.OPEN_INCIDENTS + 3; i++) {
            publishWithIncident(history, tracker, alert("s" + i, "o" + i, AlertState.RAISED, 6, 2010));
        }
        List<LiveHistory.Kept> open = history.openIncidents();
        assertEquals(LiveHistory.OPEN_INCIDENTS, open.size());
        assertEquals("s3", open.get(0).stream(), "incident a and the first three new ones, updated longest ago, are dropped");
        assertEquals(LiveHistory.RECENT_INCIDENTS, history.recentIncidents(10_000).size());
        assertEquals(AlertIds.incidentId("o" + (LiveHistory.OPEN_INCIDENTS + 2)),
                Json.mapper().readTree(history.recentIncidents(1).get(0).json()).get("id").asText());
    }

    @Test
    void streamsBeyondTheCapAreCountedNotKept() {
        LiveHistory history = new LiveHistory();
        for (int i = 0; i < LiveHistory.STREAMS + 2; i++) {
            WindowEstimate e = week(String.format("s%05d", i), 0, WindowStatus.FINAL);
            history.estimate(e, published(e));
        }
        assertEquals(LiveHistory.STREAMS, history.streams().size());
        assertEquals(2, history.droppedStreams());
    }
}
