package org.oddswatch.alerts.live;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.security.MessageDigest;
import java.util.ArrayList;
import java.util.Base64;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertIds;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.IncidentTracker;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * The live API's JSON over a {@link LiveHistory} fed as the output stage feeds it (published JSON
 * under the small-cell rule): what each path lists, the bounds of {@code last} and {@code recent}
 * (each side of each bound), open and recent incidents as published, small cells withheld exactly as published, unknown streams 404, stream
 * names with a slash, and the page: its policy allows its inline parts by their SHA-256 and nothing
 * else inline.
 */
class LiveApiTest {

    private static final SmallCellPolicy FIVE = SmallCellPolicy.DEFAULT;
    private static final String NORTH = "respiratory/north";

    /** A {@code /status}-shaped snapshot: one partition, streams {@code NORTH} and {@code quiet}. */
    private static Map<?, ?> status() throws Exception {
        return Json.mapper().readValue("""
                {"state":"ready","reason":null,
                 "counts":{"consumed":12,"outcomes":{"accepted":10,"rejected":2,"late":0,"duplicate":0},"reasons":{"bad-json":2}},
                 "partitions":[{"topic":"events","partition":0,"rebuilding":false,"committed":11,"lag":0}],
                 "inputs":[{"input":"events-0","totals":{"consumed":12,"outcomes":{},"reasons":{}},"rebuilt":40,
                   "monitors":[],
                   "streams":[{"stream":"respiratory/north","monitor":"respiratory","baseline":"failed",
                               "baselineNote":"too few events: 12 of 200","finalWindows":3,"approximateBytes":99,
                               "counts":{"consumed":10,"outcomes":{"accepted":10},"reasons":{}},"gaps":[]},
                              {"stream":"quiet","monitor":"respiratory","baseline":"none","finalWindows":0,
                               "counts":{"consumed":0,"outcomes":{},"reasons":{}},"gaps":[]}]}]}""", Map.class);
    }

    private static WindowEstimate window(int week, long events, long cases, WindowStatus status) {
        WindowEstimate w = Fixtures.window(week, 0.7, 0.2);
        return new WindowEstimate(NORTH, w.windowStart(), w.windowEnd(), status, events, cases,
                new PrevalenceEstimate((double) cases / events, 0.01, 0.2, "wilson", null), w.strata(), w.fit(),
                w.coefficients(), null, w.notes());
    }

    /** Feeds like the output stage: the published JSON under the default small-cell limit. */
    private static void publish(LiveHistory history, WindowEstimate e) {
        history.estimate(e, new Published("respiratory", NORTH + "|" + e.windowEnd(), PublishedEstimate.json(e, FIVE)));
    }

    private static void publish(LiveHistory history, Alert a) {
        history.alert(a, new Published("respiratory", a.id(), PublishedAlert.json(a, FIVE)));
    }

    private static LiveApi api(LiveHistory history) throws Exception {
        Map<?, ?> status = status();
        return new LiveApi(history, () -> status);
    }

    private static JsonNode ok(WebAnswer answer) throws Exception {
        assertEquals(200, answer.status(), answer.body());
        assertEquals(WebAnswer.JSON, answer.contentType());
        return Json.mapper().readTree(answer.body());
    }

    @Test
    void streamsJoinTheStatusWithTheNewestFinalAndOpenWindowAsPublished() throws Exception {
        LiveHistory history = new LiveHistory();
        List<String> sent = new ArrayList<>();
        for (int week = 0; week < 3; week++) {
            WindowEstimate e = window(week, 2000, 100 + week, WindowStatus.FINAL);
            publish(history, e);
            sent.add(PublishedEstimate.json(e, FIVE));
        }
        WindowEstimate open = window(3, 400, 4, WindowStatus.INTERIM);
        publish(history, open);
        publish(history, LiveHistoryTest.alert(NORTH, "e1", AlertState.RAISED, 2, 2010));

        JsonNode body = ok(api(history).answer("/api/streams", null));
        assertEquals("ready", body.at("/service/state").asText());
        assertEquals(2, body.at("/service/counts/reasons/bad-json").asLong());
        assertEquals(40, body.at("/service/partitions/0/rebuilt").asLong(), "rebuild progress joined from events-0");
        JsonNode streams = body.get("streams");
        assertEquals(List.of("quiet", NORTH), List.of(streams.get(0).get("stream").asText(), streams.get(1).get("stream").asText()));
        JsonNode north = streams.get(1);
        assertEquals("failed", north.get("baseline").asText());
        assertEquals("too few events: 12 of 200", north.get("baselineNote").asText(), "the reason a baseline failed");
        assertFalse(north.has("approximateBytes"), "internal sizes stay on /status");
        assertEquals(Json.mapper().readTree(sent.get(2)), north.get("final"), "the newest final estimate as published");
        assertEquals(1, north.get("openAlerts").asInt());
        // The open window has 4 positives: withheld under the small-cell rule, as on the topic.
        JsonNode openJson = north.get("open");
        assertFalse(openJson.has("cases"));
        assertFalse(openJson.has("prevalence"));
        assertEquals("cases", openJson.at("/withheld/0/field").asText());
        assertFalse(body.toString().contains("\"cases\":4"), "no small count anywhere");
        assertTrue(streams.get(0).get("final").isNull());
        assertFalse(body.get("truncated").asBoolean());
        assertEquals(LiveApi.STREAMS, body.at("/limits/streams").asInt());
    }

    @Test
    void estimatesGiveTheLastNOldestFirstWithinTheirBounds() throws Exception {
        LiveHistory history = new LiveHistory();
        for (int week = 0; week < 5; week++) {
            publish(history, window(week, 2000, 100, WindowStatus.FINAL));
        }
        LiveApi api = api(history);
        String path = "/api/streams/respiratory%2Fnorth/estimates";
        JsonNode two = ok(api.answer(path, "last=2"));
        assertEquals(List.of(Fixtures.start(4).toString(), Fixtures.start(5).toString()),
                List.of(two.at("/estimates/0/windowEnd").asText(), two.at("/estimates/1/windowEnd").asText()));
        assertEquals(5, ok(api.answer(path, null)).get("estimates").size(), "default: up to " + LiveApi.DEFAULT_LAST);
        assertEquals(2, ok(api.answer("/api/streams/respiratory/north/estimates", "last=2")).get("estimates").size(),
                "a slash in the name may stay unencoded");
        assertEquals(1, ok(api.answer(path, "last=1")).get("estimates").size());
        assertEquals(400, api.answer(path, "last=0").status());
        assertEquals(5, ok(api.answer(path, "last=" + LiveHistory.WINDOWS)).get("estimates").size());
        assertEquals(400, api.answer(path, "last=" + (LiveHistory.WINDOWS + 1)).status());
        assertEquals(400, api.answer(path, "last=many").status());
        JsonNode quiet = ok(api.answer("/api/streams/quiet/estimates", null));
        assertEquals(0, quiet.get("estimates").size(), "known to the status, nothing published yet");
        WebAnswer unknown = api.answer("/api/streams/nowhere/estimates", null);
        assertEquals(404, unknown.status());
        assertEquals("no such stream: nowhere", Json.mapper().readTree(unknown.body()).get("error").asText());
        assertEquals(404, api.answer("/api/other", null).status());
        assertNull(api.answer("/metrics", null), "not the API's path");
    }

    @Test
    void alertsGiveOpenEpisodesAndRecentMessagesWithSmallCountsWithheld() throws Exception {
        LiveHistory history = new LiveHistory();
        publish(history, LiveHistoryTest.alert("e1", AlertState.RAISED, 2));
        publish(history, LiveHistoryTest.alert(NORTH, "e2", AlertState.RAISED, 2, 3));
        publish(history, LiveHistoryTest.alert("e1", AlertState.CLEARED, 3));
        LiveApi api = api(history);
        JsonNode body = ok(api.answer("/api/alerts", null));
        assertEquals(1, body.get("open").size());
        assertEquals("e2", body.at("/open/0/id").asText());
        assertFalse(body.at("/open/0").has("events"), "3 events: withheld as in the published alert");
        assertEquals("events", body.at("/open/0/withheld/0/field").asText());
        assertEquals(List.of("cleared", "raised", "raised"), List.of(body.at("/recent/0/state").asText(),
                body.at("/recent/1/state").asText(), body.at("/recent/2/state").asText()), "newest first");
        assertEquals(1, ok(api.answer("/api/alerts", "recent=1")).get("recent").size());
        assertEquals(0, ok(api.answer("/api/alerts", "recent=0")).get("recent").size());
        assertEquals(400, api.answer("/api/alerts", "recent=-1").status());
        assertEquals(200, api.answer("/api/alerts", "recent=" + LiveHistory.RECENT_ALERTS).status());
        assertEquals(400, api.answer("/api/alerts", "recent=" + (LiveHistory.RECENT_ALERTS + 1)).status());
    }

    @Test
    void alertsGiveOpenAndRecentIncidentsAsPublished() throws Exception {
        LiveHistory history = new LiveHistory();
        IncidentTracker tracker = IncidentTracker.sameStream();
        List<Alert> sent = List.of(LiveHistoryTest.alert(NORTH, "e1", AlertState.RAISED, 2, 2010),
                LiveHistoryTest.alert("quiet", "q1", AlertState.RAISED, 2, 2010),
                LiveHistoryTest.alert(NORTH, "e2", AlertState.RAISED, 3, 3),
                LiveHistoryTest.alert("quiet", "q1", AlertState.CLEARED, 3, 2010));
        List<String> published = new ArrayList<>();
        for (Alert a : sent) {
            publish(history, a);
            tracker.accept(a).ifPresent(i -> {
                published.add(Json.write(i));
                history.incident(i, new Published("respiratory", i.id(), Json.write(i)));
            });
        }
        assertEquals(4, published.size(), "opened, opened, updated, resolved");
        LiveApi api = api(history);
        JsonNode body = ok(api.answer("/api/alerts", null));
        JsonNode open = body.at("/incidents/open");
        assertEquals(1, open.size(), "the quiet stream's incident is resolved");
        assertEquals(Json.mapper().readTree(published.get(2)), open.get(0), "the newest message as published");
        assertEquals(AlertIds.incidentId("e1"), open.at("/0/id").asText());
        assertEquals(2, open.at("/0/revision").asInt());
        assertEquals("updated", open.at("/0/change").asText());
        assertEquals(List.of("e1", "e2"), List.of(open.at("/0/evidence/0/episode").asText(), open.at("/0/evidence/1/episode").asText()));
        assertFalse(open.get(0).toString().contains("\"events\""), "no episode counts in an incident (e2 has 3 events)");
        JsonNode recent = body.at("/incidents/recent");
        assertEquals(List.of("resolved", "updated", "opened", "opened"), List.of(recent.at("/0/change").asText(),
                recent.at("/1/change").asText(), recent.at("/2/change").asText(), recent.at("/3/change").asText()), "newest first");
        assertEquals(1, ok(api.answer("/api/alerts", "recent=1")).at("/incidents/recent").size(), "recent bounds both lists");
        assertEquals(0, ok(api.answer("/api/alerts", "recent=0")).at("/incidents/recent").size());
        assertEquals(1, ok(api.answer("/api/alerts", "recent=0")).at("/incidents/open").size(), "open incidents are not cut by recent");
        assertEquals(LiveHistory.OPEN_INCIDENTS, body.at("/limits/openIncidents").asInt());
        assertEquals(LiveHistory.RECENT_INCIDENTS, body.at("/limits/recentIncidents").asInt());
    }

    @Test
    void thePagesPolicyAllowsItsInlinePartsByHashAndNothingElse() throws Exception {
        Map<?, ?> status = status();
        LiveSite site = new LiveSite(new LiveHistory(), () -> status);
        WebAnswer page = site.answer("/", null);
        assertEquals(200, page.status());
        assertEquals(LiveSite.HTML, page.contentType());
        String html = page.body();
        String policy = page.policy();
        assertFalse(policy.contains("unsafe"), policy);
        assertTrue(policy.startsWith("default-src 'none';"));
        assertTrue(policy.contains("connect-src 'self'"));
        assertTrue(policy.contains("frame-ancestors 'none'"));
        assertTrue(html.contains("not a diagnosis or proof of cause"), "the caution is on the page");
        List<String> inline = new ArrayList<>();
        Matcher m = Pattern.compile("<(script|style)>(.*?)</\\1>", Pattern.DOTALL).matcher(html);
        while (m.find()) {
            inline.add(m.group(2));
        }
        assertEquals(3, inline.size(), "one style, Chart.js with the chart look, the page script");
        for (String text : inline) {
            // Source: CSP Level 3, section 8.4 (hash source: base64 of the SHA-256 of the element's text).
            String hash = Base64.getEncoder().encodeToString(MessageDigest.getInstance("SHA-256")
                    .digest(text.getBytes(java.nio.charset.StandardCharsets.UTF_8)));
            assertTrue(policy.contains("'sha256-" + hash + "'"), "allowed by hash: " + text.substring(0, 40));
        }
        assertFalse(html.contains("src=\"http") || html.contains("href=\"http"), "nothing from elsewhere");
        assertFalse(html.contains(" style=\""), "no inline style attribute (the policy would block it)");
    }
}
