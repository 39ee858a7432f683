package org.oddswatch.deploy.detection;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.function.Predicate;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.deploy.scenario.ScenarioEvent;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import org.oddswatch.deploy.scenario.ScriptedChange;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;

/**
 * Detection quality of the default alert limits, on the house scenario (deploy/SCENARIOS.md) run
 * through the real monitor pipeline (decode, windows, estimator, alert engine), without Kafka.
 *
 * <ul>
 *   <li>False alarms: the {@code steady} scenario (no drift), a fixed 12-week baseline, then 52
 *       monitored weekly steps; every raised episode is a false alarm. Rate per simulated year and
 *       monitor, with its standard error over independent years.</li>
 *   <li>Delay after (a) a doubling of the household-contact odds ratio and (b) every probability
 *       times 1.3 (a 30 % prevalence rise the baseline does not expect), both 8 weeks after the
 *       baseline ends: windows from the change until the first message (raised or continuing) of the
 *       relevant rule, window 1 being the first window ending after the change; the share detected
 *       within 3 windows with its binomial standard error.</li>
 * </ul>
 * Two window layouts: weekly non-overlapping windows (P7D/P7D, the setting of the detection targets) and the
 * example definition's 28-day windows stepped weekly. Rules: the defaults of {@code AlertRulesConfig}
 * ({@code oddsRatioDrift: {}}, {@code calibration: {}}, {@code cusum: {}}) with drift on the two
 * watched terms. Events: 2,000 a week (30 % household contact, about 5 % prevalence).
 *
 * <p>Replicates: {@code -Ddetection.years=N} (default 50) and {@code -Ddetection.runs=N} (default 100).
 * The seeds are fixed, so with unchanged estimator and pipeline code the defaults reproduce the
 * figures in alerts/README.md.
 * Results go to {@code deploy/target/detection.md}. Run with {@code mvn -B -Pbench -pl deploy verify}.
 */
@Tag("benchmark")
class DetectionQualityBenchmark {

    private static final Instant START = ScenarioOptions.DEFAULT_START;
    private static final Duration WEEK = Duration.ofDays(7);
    private static final int BASELINE_WEEKS = Scenario.BASELINE_WEEKS;
    private static final int CHANGE_WEEK = BASELINE_WEEKS + 8;
    private static final int FOLLOW_WEEKS = 8;
    private static final int YEARS = Integer.getInteger("detection.years", 50);
    private static final int RUNS = Integer.getInteger("detection.runs", 100);
    private static final Map<String, String> RESULTS = new TreeMap<>();
    private static final Map<String, Map<String, Integer>> FIT_STATES = new TreeMap<>();

    /** A layout of windows, and whether clinic is in the model. */
    private record Layout(String label, String width, int widthWeeks, boolean clinic) {
    }

    /**
     * Weekly windows leave clinic out: with it the model has 11 parameters, more than a week's ~100
     * positives support at 10 events per parameter, so most in-control windows would be refused by
     * the guard (fit state too-few-events) and the false-alarm rate would look better than it is.
     */
    private static final List<Layout> LAYOUTS = List.of(
            new Layout("weekly windows (P7D, step P7D; model without clinic, 7 parameters)", "P7D", 1, false),
            new Layout("28-day windows (P28D, step P7D; model with clinic, 11 parameters)", "P28D", 4, true));

    private static final String CLINIC = "- {name: clinic, field: /clinic, kind: categorical, levels: [harbourside,"
            + " millbrook, fernhill, eastgate, stonebridge], reference: harbourside}";

    private static String definition(Layout layout) {
        return """
                monitors:
                  - name: respiratory
                    input: {topic: clinic-tests}
                    event:
                      id: /id
                      time: /collectedAt
                      maxFutureSkew: P1D
                      outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                      - {name: recent_travel, field: /exposure/travel, kind: binary, level: "yes", reference: "no", watched: true}
                      - {name: age_band, field: /ageBand, kind: categorical, levels: ["0-17", "18-39", "40-64", "65+"], reference: "18-39"}
                      - {name: sex, field: /sex, kind: binary, level: male, reference: female}
                      %s
                    window: {width: %s, step: P7D, lateness: P2D, align: 2026-01-05T00:00:00Z}
                    estimates: {level: 0.95, prevalenceInterval: wilson, minEventsPerParameter: 10}
                    baseline: {from: 2026-01-05T00:00:00Z, to: 2026-03-30T00:00:00Z}
                    rules:
                      oddsRatioDrift: {}
                      calibration: {}
                      cusum: {}
                """.formatted(layout.clinic() ? CLINIC : "", layout.width());
    }

    /** Runs one simulated feed through a fresh pipeline; returns every alert message. */
    private static List<Alert> run(Layout layout, Scenario scenario) throws Exception {
        MonitorConfig config = DefinitionLoader.parse("detection.yaml", definition(layout), Map.of(), null);
        List<Alert> alerts = new ArrayList<>();
        PipelineListener listener = new PipelineListener() {
            @Override
            public void onAlert(Alert alert) {
                alerts.add(alert);
            }

            @Override
            public void onEstimate(WindowEstimate estimate) {
                if (estimate.status() == WindowStatus.FINAL && estimate.fit() != null) {
                    FIT_STATES.computeIfAbsent(layout.label(), k -> new TreeMap<>())
                            .merge(estimate.fit().state().toString(), 1, Integer::sum);
                }
            }
        };
        MonitorPipeline pipeline = new MonitorPipeline("simulated", config.monitorsFor("clinic-tests"), listener,
                PipelineSettings.defaults());
        long line = 0;
        for (ScenarioEvent e : scenario) {
            line++;
            pipeline.offer(e.toJson().getBytes(StandardCharsets.UTF_8), RecordOrigin.line(line), false);
        }
        pipeline.closeAll();
        return alerts;
    }

    private static Instant week(int w) {
        return START.plus(WEEK.multipliedBy(w));
    }

    @Test
    void falseAlarmsWithoutDrift() throws Exception {
        for (Layout layout : LAYOUTS) {
            // judged windows start after baseline end + one window width; 52 weekly steps are monitored
            Instant from = week(BASELINE_WEEKS + layout.widthWeeks());
            Instant to = from.plus(WEEK.multipliedBy(52));
            double[] perYear = new double[YEARS];
            Map<String, Integer> byRule = new TreeMap<>();
            for (int y = 0; y < YEARS; y++) {
                ScenarioOptions o = ScenarioOptions.defaults().withSeed(7_000_000L + y)
                        .withDuration(Duration.between(START, to)).withChanges(List.of());
                for (Alert a : run(layout, Scenario.steady(o))) {
                    if (a.state() == AlertState.RAISED && a.windowEnd().isAfter(from) && !a.windowEnd().isAfter(to)) {
                        perYear[y]++;
                        byRule.merge(a.rule() + " " + a.subject().label(), 1, Integer::sum);
                    }
                }
            }
            double mean = Arrays.stream(perYear).average().orElse(0);
            double se = Math.sqrt(Arrays.stream(perYear).map(v -> (v - mean) * (v - mean)).sum() / (YEARS - 1) / YEARS);
            String text = String.format(Locale.ROOT, "%.3f false alarms per simulated year and monitor (SE %.3f, %d years);"
                    + " by rule and subject: %s", mean, se, YEARS, byRule);
            RESULTS.put("1 false alarms, " + layout.label(), text);
            System.out.println(layout.label() + ": " + text);
            assertTrue(mean <= 1.0, layout.label() + ": " + text);
        }
    }

    /** The alert messages of {@link #RUNS} feeds with the change script, one list per run. */
    private static List<List<Alert>> changeRuns(Layout layout, List<ScriptedChange> changes, long seedBase)
            throws Exception {
        List<List<Alert>> runs = new ArrayList<>();
        for (int r = 0; r < RUNS; r++) {
            ScenarioOptions o = ScenarioOptions.defaults().withSeed(seedBase + r)
                    .withDuration(WEEK.multipliedBy(CHANGE_WEEK + FOLLOW_WEEKS)).withChanges(changes);
            runs.add(run(layout, Scenario.steady(o)));
        }
        return runs;
    }

    /**
     * Per run, the delay in windows of the first message (raised or continuing) after the change that
     * {@code counts}; 0 when there is none within the follow-up.
     */
    private static int[] delays(List<List<Alert>> runs, Predicate<Alert> counts) {
        Instant change = week(CHANGE_WEEK);
        Instant last = change.plus(WEEK.multipliedBy(FOLLOW_WEEKS));
        int[] delays = new int[runs.size()];
        for (int r = 0; r < runs.size(); r++) {
            int best = 0;
            for (Alert a : runs.get(r)) {
                if ((a.state() == AlertState.RAISED || a.state() == AlertState.CONTINUING) && counts.test(a)
                        && a.windowEnd().isAfter(change) && !a.windowEnd().isAfter(last)) {
                    long millis = a.windowEnd().toEpochMilli() - change.toEpochMilli();
                    int d = (int) ((millis + WEEK.toMillis() - 1) / WEEK.toMillis());
                    best = best == 0 ? d : Math.min(best, d);
                }
            }
            delays[r] = best;
        }
        return delays;
    }

    private static String summarise(int[] delays) {
        int n = delays.length;
        long within3 = Arrays.stream(delays).filter(d -> d > 0 && d <= 3).count();
        int[] detected = Arrays.stream(delays).filter(d -> d > 0).sorted().toArray();
        double share = within3 / (double) n;
        double se = Math.sqrt(share * (1 - share) / n);
        double mean = Arrays.stream(detected).average().orElse(Double.NaN);
        double sd = Math.sqrt(Arrays.stream(detected).mapToDouble(d -> (d - mean) * (d - mean)).sum()
                / Math.max(1, detected.length - 1));
        String median = detected.length == 0 ? "n/a" : String.valueOf(detected[detected.length / 2]);
        int[] histogram = new int[FOLLOW_WEEKS + 1];
        for (int d : delays) {
            histogram[d]++;
        }
        StringBuilder h = new StringBuilder();
        for (int d = 1; d <= FOLLOW_WEEKS; d++) {
            h.append(d).append(':').append(histogram[d]).append(' ');
        }
        h.append("none:").append(histogram[0]);
        return String.format(Locale.ROOT, "detected within 3 windows %.3f (SE %.3f); detected within %d: %d/%d; "
                        + "delay among detected: mean %.2f (SE %.2f), median %s windows; histogram %s", share, se,
                FOLLOW_WEEKS, detected.length, n, mean, sd / Math.sqrt(Math.max(1, detected.length)), median, h);
    }

    @Test
    void delayAfterAnOddsRatioDoubling() throws Exception {
        List<ScriptedChange> doubling = List.of(ScriptedChange.oddsRatio("household_contact", "yes", 2.0,
                WEEK.multipliedBy(CHANGE_WEEK)));
        for (Layout layout : LAYOUTS) {
            List<List<Alert>> runs = changeRuns(layout, doubling, 8_000_000L);
            int[] drift = delays(runs, a -> a.rule().equals("odds-ratio-drift")
                    && a.subject().label().equals("household_contact=yes"));
            String text = summarise(drift);
            RESULTS.put("2 OR doubling, drift rule, " + layout.label(), text);
            System.out.println(layout.label() + " OR doubling: " + text);
            int[] any = delays(runs, a -> true);
            RESULTS.put("3 OR doubling, any rule, " + layout.label(), summarise(any));
            if (layout.widthWeeks() == 1) {
                long within3 = Arrays.stream(drift).filter(d -> d > 0 && d <= 3).count();
                assertTrue(within3 >= 0.9 * RUNS, "weekly windows: " + text);
            }
        }
    }

    @Test
    void delayAfterAnUnexpectedPrevalenceRise() throws Exception {
        List<ScriptedChange> rise = List.of(ScriptedChange.prevalence(1.3, WEEK.multipliedBy(CHANGE_WEEK)));
        Set<String> sensitive = Set.of("calibration", "bernoulli-cusum-up");
        for (Layout layout : LAYOUTS) {
            List<List<Alert>> runs = changeRuns(layout, rise, 9_000_000L);
            for (String rule : List.of("bernoulli-cusum-up", "calibration")) {
                int[] d = delays(runs, a -> a.rule().equals(rule));
                RESULTS.put("4 prevalence x1.3, " + rule + ", " + layout.label(), summarise(d));
            }
            int[] any = delays(runs, a -> sensitive.contains(a.rule()));
            String text = summarise(any);
            RESULTS.put("5 prevalence x1.3, CUSUM or calibration, " + layout.label(), text);
            System.out.println(layout.label() + " prevalence rise: " + text);
        }
    }

    @AfterAll
    static void write() throws IOException {
        Path out = Path.of("target", "detection.md");
        Files.createDirectories(out.getParent());
        StringBuilder b = new StringBuilder("# Detection quality of the default alert limits\n\n");
        b.append("Generated by `DetectionQualityBenchmark` (`mvn -B -Pbench -pl deploy verify`): the house scenario "
                + "(deploy/SCENARIOS.md) through the monitor pipeline, 2,000 events a week, 30 % household contact, "
                + "about 5 % prevalence, a fixed 12-week baseline; default rules (drift |z| >= 3 in 1 window, clear "
                + "below 2 for 2; calibration bands, HL p below 1e-4 on g degrees of freedom; Bernoulli CUSUM R 1.5 and 1/1.5, h 8). Changes start 8 weeks after "
                + "the baseline; window 1 is the first window ending after the change. ")
                .append(YEARS).append(" simulated years without drift, ").append(RUNS)
                .append(" runs per change; standard errors are simulation errors.\n\n");
        b.append("Simulated data; a signal on real data calls for investigation, it is not a diagnosis or proof of cause, "
                + "and local public-health rules, data-protection law and qualified epidemiologists decide what is done.\n\n");
        for (Map.Entry<String, String> e : RESULTS.entrySet()) {
            b.append("- **").append(e.getKey().substring(2)).append("**: ").append(e.getValue()).append('\n');
        }
        b.append("\nFit states of all final windows simulated (the guard lets only converged fits through): ")
                .append(FIT_STATES).append('\n');
        Files.writeString(out, b.toString(), StandardCharsets.UTF_8);
    }
}
