package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.gaps.MonitoringGap;

/**
 * A monitor that cannot be monitored as its definition intends, for the tests of every surface
 * that shows monitoring gaps: its term {@code smoker} has no column in the events (a CSV without
 * that column, JSON without that member), so no event is complete, the fixed-period baseline cannot
 * be fitted, the rules comparing with it do not run, the bounds rule judges no window after the
 * period (and no rule judges a window overlapping it); the CUSUM is switched off
 * ({@code enabled: false}). Ten weeks of events, weekly steps, 28-day windows.
 */
public final class GapScenario {

    public static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    public static final long WEEK = 7 * 86_400_000L;
    public static final String STREAM = "clinic";

    /**
     * The gaps every surface must show, as {@code scope|subject|reason}, in the order a stream
     * lists them: the baseline, the rules off, the windows not judged, the terms missing.
     */
    public static final List<String> EXPECTED = List.of(
            "baseline|null|baseline-failed",
            "rule|odds-ratio-drift|baseline-failed",
            "rule|calibration|baseline-failed",
            "rule|bernoulli-cusum|switched-off",
            "windows|odds-ratio-bounds|no-fit",
            "windows|null|baseline-period",
            "term|smoker|term-missing");

    private GapScenario() {
    }

    /** One element of {@code monitors:} reading {@code topic}, indented by two spaces. */
    public static String monitor(String topic) {
        return """
                  - name: clinic
                    input: {topic: %s}
                    event:
                      id: /id
                      time: /collectedAt
                      outcome: {field: /result, positive: [positive], negative: [negative]}
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, watched: true}
                      - {name: smoker, field: /smoker, kind: binary}
                    window: {width: P28D, step: P7D, lateness: P1D, align: 2026-01-05T00:00:00Z}
                    baseline: {from: 2026-01-05T00:00:00Z, to: 2026-02-02T00:00:00Z}
                    rules:
                      oddsRatioDrift: {}
                      oddsRatioBounds: {terms: [{term: household_contact, above: 5}]}
                      cusum: {enabled: false}
                """.formatted(topic);
    }

    /** A whole definition file with just this monitor. */
    public static String definition(String topic) {
        return "monitors:\n" + monitor(topic);
    }

    private static List<HouseEvents.HouseEvent> events() {
        return HouseEvents.events(20261203, 1200, START, 10 * WEEK, 0, "north");
    }

    /** The events as JSON lines (no {@code smoker} member). */
    public static List<String> jsonLines() {
        List<String> lines = new ArrayList<>();
        for (HouseEvents.HouseEvent event : events()) {
            lines.add(event.json());
        }
        return lines;
    }

    /** The events as CSV lines, header first (no {@code smoker} column). */
    public static List<String> csvLines() {
        List<String> lines = new ArrayList<>();
        lines.add(HouseEvents.CSV_HEADER);
        for (HouseEvents.HouseEvent event : events()) {
            lines.add(event.csv());
        }
        return lines;
    }

    /** {@code scope|subject|reason} of each gap, for comparing with {@link #EXPECTED}. */
    public static List<String> keys(List<MonitoringGap> gaps) {
        return gaps.stream().map(g -> g.scope().label() + "|" + g.subject() + "|" + g.reason().code()).toList();
    }
}
