package org.oddswatch.deploy.scenario;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.time.Duration;
import java.time.Instant;
import java.util.EnumMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;

class ScenarioTest {

    private static final ScenarioOptions TWELVE_WEEKS = ScenarioOptions.defaults().withDuration(Duration.ofDays(84));

    @Test
    void sameOptionsGiveTheSameRecordsAndAnotherSeedDoesNot() {
        List<String> a = Scenario.respiratory(TWELVE_WEEKS).events().limit(3000).map(ScenarioEvent::toJson).toList();
        List<String> b = Scenario.respiratory(TWELVE_WEEKS).events().limit(3000).map(ScenarioEvent::toJson).toList();
        List<String> c = Scenario.respiratory(TWELVE_WEEKS.withSeed(7)).events().limit(3000)
                .map(ScenarioEvent::toJson).toList();
        assertEquals(a, b);
        assertNotEquals(a, c);
    }

    @Test
    void cleanEventsAreValidJsonWithTheDocumentedFields() throws IOException {
        for (ScenarioEvent e : Scenario.respiratory(TWELVE_WEEKS).events().limit(500).toList()) {
            JsonNode n = Json.mapper().readTree(e.toJson());
            assertEquals(e.id(), n.at("/id").asText());
            assertEquals(e.collectedAt(), Instant.parse(n.at("/collectedAt").asText()));
            assertTrue(Set.of("positive", "negative").contains(n.at("/result").asText()));
            assertTrue(Set.of("yes", "no").contains(n.at("/exposure/household").asText()));
            assertTrue(Set.of("yes", "no").contains(n.at("/exposure/travel").asText()));
            assertTrue(Population.AGE_BANDS.levels().contains(n.at("/ageBand").asText()));
            assertTrue(Population.SEXES.levels().contains(n.at("/sex").asText()));
            assertEquals(Population.regionOf(n.at("/clinic").asText()), n.at("/region").asText());
        }
    }

    @Test
    void eventsStayInsideTheSpanInEmissionOrderWithTheRequestedRate() {
        List<ScenarioEvent> events = Scenario.steady(TWELVE_WEEKS).events().toList();
        Instant previous = TWELVE_WEEKS.start();
        for (ScenarioEvent e : events) {
            assertFalse(e.emittedAt().isBefore(previous));
            assertTrue(e.emittedAt().isBefore(TWELVE_WEEKS.end()));
            previous = e.emittedAt();
        }
        // Poisson count with mean 12 x 2000 = 24000: within 4 standard deviations (sqrt 24000 = 155).
        assertEquals(24000, events.size(), 4 * Math.sqrt(24000));
        assertEquals(events.size(), events.stream().map(ScenarioEvent::id).distinct().count());
    }

    @Test
    void baselinePrevalenceIsFivePercentAsDocumented() {
        // The house scenario's design target (deploy/SCENARIOS.md): 5 % baseline prevalence, 30 % exposed.
        Scenario s = Scenario.steady(TWELVE_WEEKS);
        assertEquals(0.05, s.expectedPrevalence(TWELVE_WEEKS.start()), 0.0005);
        List<ScenarioEvent> events = s.events().toList();
        int n = events.size();
        long positives = events.stream().filter(ScenarioEvent::positive).count();
        double p = s.expectedPrevalence(TWELVE_WEEKS.start());
        assertEquals(p * n, positives, 4 * Math.sqrt(n * p * (1 - p)));
        long exposed = events.stream().filter(e -> e.person().household()).count();
        assertEquals(0.30 * n, exposed, 4 * Math.sqrt(n * 0.3 * 0.7));
    }

    @Test
    void outcomesFollowTheRecordedTrueProbabilities() {
        List<ScenarioEvent> events = Scenario.respiratory(ScenarioOptions.defaults()).events().toList();
        double expected = events.stream().mapToDouble(ScenarioEvent::probability).sum();
        double variance = events.stream().mapToDouble(e -> e.probability() * (1 - e.probability())).sum();
        long positives = events.stream().filter(ScenarioEvent::positive).count();
        assertEquals(expected, positives, 4 * Math.sqrt(variance));
    }

    @Test
    void theScriptDoublesTheHouseholdOddsRatioAndLaterRaisesPrevalence() {
        Scenario s = Scenario.respiratory(ScenarioOptions.defaults());
        Instant before = Instant.parse("2026-04-26T23:59:59Z");
        Instant doubled = Instant.parse("2026-04-27T00:00:00Z");
        Instant risen = Instant.parse("2026-07-06T00:00:00Z");
        assertEquals(2.5, s.trueOddsRatio("household_contact", "yes", before), 1e-12);
        assertEquals(5.0, s.trueOddsRatio("household_contact", "yes", doubled), 1e-12);
        assertEquals(1.8, s.trueOddsRatio("recent_travel", "yes", doubled), 1e-12);
        double p = s.expectedPrevalence(doubled);
        assertEquals(1.3 * p, s.expectedPrevalence(risen), 1e-3 * p);

        // In the data: the crude household odds ratio of weeks 16-26 over that of weeks 0-16 is about 2.
        // Woolf's variance of a log odds ratio (sum of reciprocal cell counts), common practice.
        List<ScenarioEvent> events = s.events().toList();
        double[] pre = table(events, s.options().start(), doubled);
        double[] post = table(events, doubled, risen);
        double logRatio = logOr(post) - logOr(pre);
        double se = Math.sqrt(woolf(pre) + woolf(post));
        assertEquals(Math.log(2), logRatio, 4 * se);
        assertTrue(logRatio > 4 * se, "the doubling is visible in the data");
    }

    @Test
    void steadyHasNoChange() {
        Scenario s = Scenario.steady(ScenarioOptions.defaults());
        assertTrue(s.changes().isEmpty());
        assertEquals(s.expectedPrevalence(s.options().start()), s.expectedPrevalence(s.options().end()), 1e-15);
    }

    @Test
    void defectsAreExtraRecordsAndLeaveTheCleanFeedUntouched() throws IOException {
        ScenarioOptions withDefects = TWELVE_WEEKS.withDefectShare(0.05);
        List<ScenarioEvent> dirty = Scenario.respiratory(withDefects).events().toList();
        List<String> clean = Scenario.respiratory(TWELVE_WEEKS).events().map(ScenarioEvent::toJson).toList();
        assertEquals(clean, dirty.stream().filter(e -> e.defect() == RecordDefect.NONE).map(ScenarioEvent::toJson)
                .toList());
        Map<RecordDefect, Integer> counts = new EnumMap<>(RecordDefect.class);
        Set<String> seenIds = new HashSet<>();
        for (ScenarioEvent e : dirty) {
            counts.merge(e.defect(), 1, Integer::sum);
            switch (e.defect()) {
                case MALFORMED_JSON -> assertThrows(IOException.class, () -> Json.mapper().readTree(e.toJson()));
                case BAD_OUTCOME -> assertEquals("unclear", Json.mapper().readTree(e.toJson()).at("/result").asText());
                case MISSING_TIME -> assertTrue(Json.mapper().readTree(e.toJson()).at("/collectedAt").isMissingNode());
                case BAD_TIME -> assertThrows(RuntimeException.class,
                        () -> Instant.parse(Json.mapper().readTree(e.toJson()).at("/collectedAt").asText()));
                case LATE -> assertEquals(e.emittedAt().minus(Duration.ofDays(10)), e.collectedAt());
                case DUPLICATE -> assertTrue(seenIds.contains(e.id()));
                case NONE -> assertTrue(seenIds.add(e.id()));
            }
        }
        int defects = dirty.size() - clean.size();
        assertEquals(0.05 * clean.size(), defects, 4 * Math.sqrt(clean.size() * 0.05 * 0.95));
        for (RecordDefect d : RecordDefect.values()) {
            assertTrue(counts.getOrDefault(d, 0) > 0, "some " + d);
        }
    }

    @Test
    void optionsAndNamesAreChecked() {
        assertThrows(IllegalArgumentException.class, () -> ScenarioOptions.defaults().withEventsPerWeek(0));
        assertThrows(IllegalArgumentException.class, () -> ScenarioOptions.defaults().withDefectShare(1.5));
        assertThrows(IllegalArgumentException.class, () -> Scenario.named("nope", ScenarioOptions.defaults()));
        assertEquals(Scenario.STEADY, Scenario.named("Steady", ScenarioOptions.defaults()).name());
        assertEquals(Set.of("north", "south"), Scenario.respiratory(TWELVE_WEEKS).events().limit(1000)
                .map(ScenarioEvent::key).collect(Collectors.toSet()));
    }

    /** exposed positives, exposed negatives, unexposed positives, unexposed negatives in [from, to). */
    private static double[] table(List<ScenarioEvent> events, Instant from, Instant to) {
        double[] t = new double[4];
        for (ScenarioEvent e : events) {
            if (!e.collectedAt().isBefore(from) && e.collectedAt().isBefore(to)) {
                t[(e.person().household() ? 0 : 2) + (e.positive() ? 0 : 1)]++;
            }
        }
        return t;
    }

    private static double logOr(double[] t) {
        return Math.log(t[0] * t[3] / (t[1] * t[2]));
    }

    private static double woolf(double[] t) {
        return 1 / t[0] + 1 / t[1] + 1 / t[2] + 1 / t[3];
    }
}
