package org.oddswatch.alerts.live;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import java.time.temporal.ChronoUnit;
import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentChange;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * What a restart hands the live page: final estimates merged by window end with those kept (what
 * this instance published since wins, the newest {@value LiveHistory#WINDOWS} kept), open episodes
 * and incidents joining the open lists but not the recent ones, and the open lists letting go of
 * released streams.
 */
class LiveHistoryRestoreTest {

    private static Published marked(WindowEstimate e, String mark) {
        return new Published("respiratory", e.stream() + "|" + e.windowEnd(), "{\"from\":\"" + mark + "\"}");
    }

    private static List<String> marks(List<LiveHistory.Kept> kept) {
        return kept.stream().map(k -> k.json().substring(9, k.json().length() - 2) + "@"
                + Fixtures.start(0).until(k.windowEnd(), ChronoUnit.DAYS) / 7).toList();
    }

    @Test
    void restoredFinalsMergeByWindowEndAndWhatWasPublishedSinceStays() {
        LiveHistory history = new LiveHistory();
        WindowEstimate live = LiveHistoryTest.week("a", 5, WindowStatus.FINAL); // published before the restore came
        history.estimate(live, marked(live, "live"));
        WindowEstimate interim = LiveHistoryTest.week("a", 6, WindowStatus.INTERIM);
        history.estimate(interim, marked(interim, "live"));
        for (int week = 2; week <= 5; week++) {
            WindowEstimate e = LiveHistoryTest.week("a", week, WindowStatus.FINAL);
            history.restoredEstimate(e, marked(e, "topic"));
        }
        WindowEstimate restoredInterim = LiveHistoryTest.week("a", 7, WindowStatus.INTERIM);
        history.restoredEstimate(restoredInterim, marked(restoredInterim, "topic"));
        assertEquals(List.of("topic@3", "topic@4", "topic@5", "live@6"), marks(history.finals("a", 10)),
                "oldest first; the window published since keeps its copy; interim estimates are not restored");
        assertEquals("{\"from\":\"live\"}", history.open("a").json(), "the open window after the newest final stays");

        WindowEstimate again = LiveHistoryTest.week("a", 5, WindowStatus.FINAL);
        history.restoredEstimate(again, marked(again, "topic"));
        assertEquals("{\"from\":\"live\"}", history.newestFinal("a").json());
        WindowEstimate newer = LiveHistoryTest.week("a", 6, WindowStatus.FINAL);
        history.restoredEstimate(newer, marked(newer, "topic"));
        assertNull(history.open("a"), "the open window is final now");
        assertEquals("respiratory", history.monitor("a"));
        assertEquals(List.of(), history.recentAlerts(10));
    }

    @Test
    void restoredFinalsKeepTheNewestWindows() {
        LiveHistory history = new LiveHistory();
        int restored = LiveHistory.WINDOWS + 9;
        for (int week = restored - 1; week >= 0; week--) { // any order
            WindowEstimate e = LiveHistoryTest.week("a", week, WindowStatus.FINAL);
            history.restoredEstimate(e, marked(e, "topic"));
        }
        List<LiveHistory.Kept> kept = history.finals("a", 10_000);
        assertEquals(LiveHistory.WINDOWS, kept.size());
        assertEquals(Fixtures.start(10), kept.get(0).windowEnd(), "the 9 oldest windows are not kept");
        assertEquals(Fixtures.start(restored), kept.get(kept.size() - 1).windowEnd());
    }

    @Test
    void restoredEpisodesJoinTheOpenListUnlessNewerOrCleared() {
        LiveHistory history = new LiveHistory();
        Alert newer = LiveHistoryTest.alert("e1", AlertState.CONTINUING, 6);
        history.alert(newer, LiveHistoryTest.published(newer));
        Alert older = LiveHistoryTest.alert("e1", AlertState.RAISED, 5);
        history.restoredAlert(older, new Published("respiratory", "e1", "{\"old\":true}"));
        Alert other = LiveHistoryTest.alert("e2", AlertState.CONTINUING, 5);
        history.restoredAlert(other, new Published("respiratory", "e2", "{\"restored\":\"e2\"}"));
        history.restoredAlert(other, new Published("respiratory", "e2", "{\"restored\":\"e2\"}")); // read twice
        Alert cleared = LiveHistoryTest.alert("e3", AlertState.CLEARED, 5);
        history.restoredAlert(cleared, new Published("respiratory", "e3", "{\"restored\":\"e3\"}"));
        assertEquals(List.of(LiveHistoryTest.published(newer).json(), "{\"restored\":\"e2\"}"),
                history.openAlerts().stream().map(LiveHistory.Kept::json).toList());
        assertEquals(1, history.recentAlerts(10).size(), "only the message published since");
    }

    @Test
    void restoredIncidentsAreTheLatestMessagesSentBefore() {
        IncidentTracker before = IncidentTracker.sameStream();
        List<Alert> published = new ArrayList<>();
        List<Incident> sent = new ArrayList<>();
        for (Alert a : List.of(LiveHistoryTest.alert("a", "e1", AlertState.RAISED, 3, 2010),
                LiveHistoryTest.alert("a", "e2", AlertState.RAISED, 4, 2010),
                LiveHistoryTest.alert("b", "e3", AlertState.RAISED, 4, 2010),
                LiveHistoryTest.alert("b", "e3", AlertState.CLEARED, 6, 2010))) {
            published.add(a);
            before.accept(a).ifPresent(sent::add);
        }
        IncidentTracker after = IncidentTracker.sameStream();
        List<Incident> restored = after.restoreLatest(published);
        assertEquals(1, restored.size(), "the incident on b was resolved");
        Incident latestOnA = sent.stream().filter(i -> i.streams().contains("a")).reduce((x, y) -> y).orElseThrow();
        assertEquals(Json.write(latestOnA), Json.write(restored.get(0)), "the message sent last, byte for byte");
        assertEquals(List.of(), after.restoreLatest(published), "restored again: nothing more taken over");

        LiveHistory history = new LiveHistory();
        restored.forEach(i -> history.restoredIncident(i, new Published("respiratory", i.id(), Json.write(i))));
        assertEquals(List.of(Json.write(latestOnA)), history.openIncidents().stream().map(LiveHistory.Kept::json).toList());
        assertEquals(List.of(), history.recentIncidents(10));
    }

    @Test
    void releasedStreamsLeaveTheOpenListsButKeepTheirEstimates() {
        LiveHistory history = new LiveHistory();
        IncidentTracker tracker = new IncidentTracker((x, y) -> Set.of(x, y).equals(Set.of("m/north", "m")));
        for (Alert a : List.of(LiveHistoryTest.alert("m/north", "n1", AlertState.RAISED, 3, 2010),
                LiveHistoryTest.alert("m", "p1", AlertState.RAISED, 3, 2010),
                LiveHistoryTest.alert("m/south", "s1", AlertState.RAISED, 3, 2010),
                LiveHistoryTest.alert("m/east", "e1", AlertState.RAISED, 3, 2010))) {
            LiveHistoryTest.publishWithIncident(history, tracker, a);
        }
        WindowEstimate e = LiveHistoryTest.week("m/east", 3, WindowStatus.FINAL);
        history.estimate(e, LiveHistoryTest.published(e));
        assertEquals(4, history.openAlerts().size());
        assertEquals(3, history.openIncidents().size(), "m/north with m, m/south, m/east");

        history.released(List.of("m/east", "m/north"));
        assertEquals(List.of("m", "m/south"), history.openAlerts().stream().map(LiveHistory.Kept::stream).toList());
        List<String> firstStreams = history.openIncidents().stream().map(LiveHistory.Kept::stream).toList();
        assertEquals(List.of("m/north", "m/south"), firstStreams, "only the incident all on released streams leaves");
        assertEquals(1, history.finals("m/east", 10).size(), "its estimates stay");
        assertEquals(4, history.recentAlerts(10).size(), "recent messages stay");
    }

    /**
     * An incident the page lists as open that another instance resolved meanwhile: the resolution
     * the tracker reads back when the stream comes here closes it (not a recent message, as nothing
     * was sent here).
     */
    @Test
    void aResolutionReadBackClosesTheOpenIncident() {
        IncidentTracker tracker = IncidentTracker.sameStream();
        LiveHistory history = new LiveHistory();
        Alert raised = LiveHistoryTest.alert("b", "e3", AlertState.RAISED, 4, 2010);
        Alert other = LiveHistoryTest.alert("a", "e1", AlertState.RAISED, 4, 2010);
        tracker.restoreLatest(List.of(raised, other))
                .forEach(i -> history.restoredIncident(i, new Published("respiratory", i.id(), Json.write(i))));
        assertEquals(List.of("b", "a"), history.openIncidents().stream().map(LiveHistory.Kept::stream).toList());
        List<Incident> ended = tracker.restoreLatest(List.of(raised, other,
                LiveHistoryTest.alert("b", "e3", AlertState.CLEARED, 6, 2010)));
        assertEquals(List.of(IncidentChange.RESOLVED), ended.stream().map(Incident::change).toList());
        ended.forEach(i -> history.restoredIncident(i, new Published("respiratory", i.id(), Json.write(i))));
        assertEquals(List.of("a"), history.openIncidents().stream().map(LiveHistory.Kept::stream).toList());
        assertEquals(List.of(), history.recentIncidents(10));
    }
}
