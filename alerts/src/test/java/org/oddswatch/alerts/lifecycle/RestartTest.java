package org.oddswatch.alerts.lifecycle;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.alerts.json.Json;

/**
 * A service is stopped with an open episode and started again: the new engine restores from the
 * alerts read back (here: a JSON round trip, as from the alerts topic), sends nothing again for data
 * it re-reads while rebuilding, continues the same episode and later clears it with the same id.
 */
class RestartTest {

    private static final double[] Z = {0.5, 1.0, 3.6, 4.1, 3.9, 2.4, 1.0, 0.5, 0.2, 3.3};

    private static AlertEngine engine() {
        return new AlertEngine(Fixtures.STREAM, new AlertRulesConfig(null,
                new AlertRulesConfig.OddsRatioDrift(null, null, null, null, null, null), null, null, null),
                Fixtures.baseline(), new ReplayHint("monitors/north.yaml", null, "clinic-tests"));
    }

    private static List<Alert> feed(AlertEngine e, int from, int to) {
        List<Alert> out = new ArrayList<>();
        for (int w = from; w < to; w++) {
            out.addAll(e.onFinalEstimate(Fixtures.windowWithZ(w, Z[w])));
        }
        return out;
    }

    private static List<Alert> readBack(List<Alert> published) throws Exception {
        ObjectMapper m = Json.mapper();
        List<Alert> back = new ArrayList<>();
        for (Alert a : published) {
            back.add(m.readValue(Json.write(a), Alert.class));
        }
        return back;
    }

    @Test
    void uninterruptedRunIsTheReference() {
        List<Alert> all = feed(engine(), 0, Z.length);
        assertEquals(List.of(AlertState.RAISED, AlertState.CONTINUING, AlertState.CONTINUING, AlertState.CLEARED,
                AlertState.RAISED), all.stream().map(Alert::state).toList());
        assertEquals(all.get(0).id(), all.get(3).id());
        assertTrue(!all.get(0).id().equals(all.get(4).id()), "a new episode has a new id");
        assertEquals(AlertIds.episodeId(Fixtures.STREAM, "odds-ratio-drift", new AlertSubject("household_contact", "yes"),
                Fixtures.start(2).plus(Fixtures.WEEK)), all.get(0).id());
        // same input, same alerts, byte for byte
        assertEquals(all.stream().map(Json::write).toList(),
                feed(engine(), 0, Z.length).stream().map(Json::write).toList());
    }

    @Test
    void restartWithAnOpenEpisodeNeitherResendsNorForgets() throws Exception {
        List<Alert> reference = feed(engine(), 0, Z.length);
        AlertEngine before = engine();
        List<Alert> published = feed(before, 0, 4); // raised at 2, continuing at 3; stopped while open
        assertEquals(2, published.size());

        AlertEngine after = engine();
        after.restore(readBack(published));
        assertEquals(1, after.openEpisodes().size());
        assertEquals(published.get(0).id(), after.openEpisodes().get(0).id());
        // the rebuild re-reads the last windows: nothing is published again
        assertEquals(List.of(), feed(after, 1, 4));
        List<Alert> rest = feed(after, 4, Z.length);
        List<Alert> combined = new ArrayList<>(published);
        combined.addAll(rest);
        assertEquals(reference.stream().map(Json::write).toList(), combined.stream().map(Json::write).toList());
    }

    @Test
    void restartWithoutRebuildContinuesAndClearsTheRestoredEpisode() throws Exception {
        List<Alert> published = feed(engine(), 0, 4);
        AlertEngine after = engine();
        after.restore(readBack(published));
        List<Alert> rest = feed(after, 4, 9);
        assertEquals(List.of(AlertState.CONTINUING, AlertState.CLEARED), rest.stream().map(Alert::state).toList());
        assertTrue(rest.stream().allMatch(a -> a.id().equals(published.get(0).id())));
        assertEquals(0, after.openEpisodes().size());
    }

    @Test
    void restoreIgnoresOtherStreamsAndClearedEpisodes() throws Exception {
        List<Alert> cycle = feed(engine(), 0, 8); // raised ... cleared
        AlertEngine after = engine();
        after.restore(readBack(cycle));
        assertEquals(0, after.openEpisodes().size());
        assertEquals(List.of(), feed(after, 0, 8), "everything up to the clearing was published already");
        AlertEngine other = new AlertEngine("respiratory-south", AlertRulesConfig.defaults(), Fixtures.baseline(), null);
        other.restore(readBack(cycle));
        assertEquals(0, other.openEpisodes().size());
    }
}
