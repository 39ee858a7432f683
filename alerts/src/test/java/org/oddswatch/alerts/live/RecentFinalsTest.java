package org.oddswatch.alerts.live;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.charset.StandardCharsets;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The read-back of an estimates topic for the live page: final estimates of the wanted streams only,
 * the newest {@value LiveHistory#WINDOWS} windows per stream (a window read twice keeps the later
 * copy), at most {@value LiveHistory#STREAMS} streams, each given back with the text as read.
 */
class RecentFinalsTest {

    private static byte[] bytes(String json) {
        return json.getBytes(StandardCharsets.UTF_8);
    }

    private static String json(String stream, int week, WindowStatus status) {
        return Json.write(LiveHistoryTest.week(stream, week, status));
    }

    @Test
    void keepsTheNewestFinalWindowsOfTheWantedStreamsAsRead() {
        RecentFinals finals = new RecentFinals(s -> s.startsWith("resp"));
        int read = LiveHistory.WINDOWS + 5;
        for (int week = 0; week < read; week++) {
            assertTrue(finals.add(bytes(json("resp/north", week, WindowStatus.FINAL))));
            assertTrue(finals.add(bytes(json("resp/north", week + 1, WindowStatus.INTERIM))));
            assertTrue(finals.add(bytes(json("other", week, WindowStatus.FINAL))));
        }
        List<RecentFinals.Final> kept = finals.of("resp/north");
        assertEquals(LiveHistory.WINDOWS, kept.size());
        assertEquals(Fixtures.start(6), kept.get(0).estimate().windowEnd(), "the 5 oldest windows are not kept");
        assertEquals(Fixtures.start(read), kept.get(kept.size() - 1).estimate().windowEnd(), "oldest first");
        assertTrue(kept.stream().allMatch(f -> f.estimate().status() == WindowStatus.FINAL));
        assertEquals(json("resp/north", read - 1, WindowStatus.FINAL), kept.get(kept.size() - 1).json(), "the text as read");
        assertEquals(List.of(), finals.of("other"), "a stream not wanted");
        assertEquals(0, finals.passedOver());
    }

    @Test
    void aWindowReadTwiceKeepsTheLaterCopy() {
        RecentFinals finals = new RecentFinals(s -> true);
        WindowEstimate w = LiveHistoryTest.week("a", 3, WindowStatus.FINAL);
        WindowEstimate again = new WindowEstimate("a", w.windowStart(), w.windowEnd(), WindowStatus.FINAL, w.events() + 1,
                w.cases(), w.prevalence(), w.strata(), w.fit(), w.coefficients(), w.calibration(), w.notes());
        finals.add(bytes(Json.write(w)));
        finals.add(bytes(Json.write(again)));
        assertEquals(List.of(Json.write(again)), finals.of("a").stream().map(RecentFinals.Final::json).toList());
    }

    @Test
    void valuesThatAreNotEstimatesAreRefusedAndStreamsAreCapped() {
        RecentFinals finals = new RecentFinals(s -> true);
        assertFalse(finals.add(bytes("not json")));
        assertFalse(finals.add(bytes("{\"id\":\"an alert\"}")));
        for (int i = 0; i < LiveHistory.STREAMS + 3; i++) {
            finals.add(bytes(json(String.format("s%05d", i), 0, WindowStatus.FINAL)));
        }
        assertEquals(3, finals.passedOver());
        assertEquals(1, finals.of("s00000").size());
        assertEquals(List.of(), finals.of(String.format("s%05d", LiveHistory.STREAMS)));
    }
}
