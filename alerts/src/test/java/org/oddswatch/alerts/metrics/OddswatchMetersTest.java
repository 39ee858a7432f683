package org.oddswatch.alerts.metrics;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.micrometer.core.instrument.simple.SimpleMeterRegistry;
import java.lang.reflect.Field;
import java.lang.reflect.Modifier;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.stream.Collectors;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.engine.AlertEngine;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.metrics.MeterScrape.Sample;

/**
 * Scrapes a Prometheus registry the binders fed and checks it against the meter table in
 * {@code alerts/README.md}: every documented series is exposed with exactly the documented tags,
 * and every meter name {@link OddswatchMeters} declares is documented.
 */
class OddswatchMetersTest {

    /** One documented row: Micrometer name, Prometheus series, tag keys. */
    record Documented(String meter, String series, Set<String> tags) {
    }

    static List<Documented> documented() throws Exception {
        String readme = Files.readString(Path.of("README.md"));
        int from = readme.indexOf("<!-- meters:start -->");
        int to = readme.indexOf("<!-- meters:end -->");
        assertTrue(from >= 0 && to > from, "README.md has the meter table markers");
        List<Documented> rows = new ArrayList<>();
        for (String line : readme.substring(from, to).split("\n")) {
            if (!line.startsWith("| `")) {
                continue;
            }
            String[] cells = line.split("\\|");
            String meter = cells[1].trim().replace("`", "");
            String series = cells[3].trim().split("`")[1];
            Set<String> tags = Arrays.stream(cells[4].trim().split(",")).map(String::trim).filter(s -> !s.isEmpty())
                    .collect(Collectors.toCollection(TreeSet::new));
            rows.add(new Documented(meter, series, tags));
        }
        return rows;
    }

    @Test
    void everyDocumentedSeriesIsExposedWithItsTags() throws Exception {
        List<Sample> samples = MeterScrape.parse(MeterScrape.scrape());
        List<Documented> rows = documented();
        assertTrue(rows.size() >= 18, "rows: " + rows.size());
        for (Documented d : rows) {
            List<Sample> found = samples.stream().filter(s -> s.name().equals(d.series())).toList();
            assertFalse(found.isEmpty(), d.series() + " (" + d.meter() + ") is not in the scrape");
            for (Sample s : found) {
                assertEquals(d.tags(), new TreeSet<>(s.labels().keySet()), "tags of " + d.series());
            }
        }
    }

    @Test
    void everyMeterTheBinderDeclaresIsDocumented() throws Exception {
        Set<String> documented = documented().stream().map(Documented::meter).collect(Collectors.toSet());
        for (Field f : OddswatchMeters.class.getFields()) {
            if (Modifier.isStatic(f.getModifiers()) && f.getType() == String.class
                    && ((String) f.get(null)).startsWith("oddswatch.")) {
                assertTrue(documented.contains((String) f.get(null)), f.get(null) + " is not in README.md");
            }
        }
    }

    @Test
    void valuesFollowTheUpdates() {
        List<Sample> samples = MeterScrape.parse(MeterScrape.scrape());
        Sample state = samples.stream().filter(s -> s.name().equals("oddswatch_alert_state")).findFirst().orElseThrow();
        assertEquals("1.0", state.value());
        assertEquals("odds-ratio-drift", state.labels().get("rule"));
        assertEquals("household_contact", state.labels().get("term"));
        assertEquals("yes", state.labels().get("level"));
        // One raised message per open episode; a restored episode (AlertMeters.restored) is not counted.
        List<Sample> messages = samples.stream().filter(s -> s.name().equals("oddswatch_alerts_total")).toList();
        long open = samples.stream().filter(s -> s.name().equals("oddswatch_alert_state") && s.value().equals("1.0"))
                .count();
        assertEquals(open, messages.stream().filter(s -> "raised".equals(s.labels().get("state")))
                .mapToDouble(s -> Double.parseDouble(s.value())).sum(), 0.0);
        assertTrue(messages.stream().allMatch(s -> "raised".equals(s.labels().get("state"))), messages.toString());
        Sample or = samples.stream().filter(s -> s.name().equals("oddswatch_odds_ratio")
                && "household_contact".equals(s.labels().get("term"))).findFirst().orElseThrow();
        assertEquals(4.0, Double.parseDouble(or.value()), 1e-12);
        Sample rejected = samples.stream().filter(s -> s.name().equals("oddswatch_records_total")
                && "rejected".equals(s.labels().get("outcome"))).findFirst().orElseThrow();
        assertEquals("bad-time", rejected.labels().get("reason"));
        assertEquals(1.0, Double.parseDouble(rejected.value()));
    }

    @Test
    void aRestoredEpisodeShowsItsStateButIsNotCountedAsAMessage() {
        SimpleMeterRegistry registry = new SimpleMeterRegistry();
        AlertMeters meters = new AlertMeters();
        meters.bindTo(registry);
        Alert raised = new AlertEngine(Fixtures.STREAM, Fixtures.earlierDefaults(), Fixtures.baseline(), null)
                .onFinalEstimate(Fixtures.windowWithZ(0, 4)).get(0);
        meters.restored(raised);
        assertEquals(1.0, registry.get(OddswatchMeters.ALERT_STATE).gauge().value());
        assertNull(registry.find(OddswatchMeters.ALERTS).counter(), "restoring publishes nothing");
        meters.alert(raised);
        assertEquals(1.0, registry.get(OddswatchMeters.ALERTS).tag("state", "raised").tag("rule", raised.rule())
                .counter().count());
    }
}
