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
import java.util.SplittableRandom;
import java.util.TreeMap;
import java.util.function.Predicate;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.lifecycle.IncidentChange;
import org.oddswatch.alerts.output.OutputSink;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.deploy.detection.SimulatedProgramme.Change;
import org.oddswatch.deploy.detection.SimulatedProgramme.Kind;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.output.OutputStage;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.pipeline.RecordOrigin;

/**
 * Detection quality of the alert rules as configured by default, through the real monitor pipeline
 * and output stage (decode, windows, estimator, alert engine, incident grouping), without Kafka, on
 * two simulated programmes ({@link SimulatedProgramme}):
 *
 * <ul>
 *   <li>the house scenario: one monitor, weekly windows (P7D, step P7D), model without clinic
 *       (7 parameters);</li>
 *   <li>sixteen districts (about 12 % prevalence): an unsplit programme monitor and the same events
 *       split by district (16 streams), 28-day windows stepped weekly (a district's week has about 24
 *       positives, too few for a 7-parameter model at 10 events per parameter).</li>
 * </ul>
 * Both have a fixed 12-week baseline and the defaults of {@code AlertRulesConfig}
 * ({@code calibration: {}} with its bands from the budget, {@code cusum: {}}, the step CUSUM on both
 * watched terms; the window z-rule only with {@code -Ddetection.drift=on}, see {@link #EXTRA_RULES}).
 *
 * <p>False alarms: no change, 52 monitored weekly steps per simulated year; every raised episode is a
 * false alarm, counted per monitor, and every opened incident (the grouping on-call receives). Delay:
 * a change {@value #CHANGE_AFTER_BASELINE} weeks after the baseline (household-contact odds ratio × 2
 * and × 0.5; every probability × 1.3, which the baseline does not expect; the calibration slope × 0.6
 * at unchanged mean prevalence), in the districts programme in district d01 only; window 1 is the
 * first window ending after the change, and a run's delay is the first message (raised or
 * continuing) of a counted rule on a counted stream. Standard errors are simulation errors. In-control
 * run lengths: each {@link InControlRunLength} computed and simulated.
 *
 * <p>Replicates (system properties): {@code detection.years} (default 50) and {@code detection.runs}
 * (100) for the house scenario, {@code detection.districtYears} (16) and {@code detection.districtRuns}
 * (30) for the districts, {@code detection.arlRuns} (2000) simulated run lengths per detector; the
 * defaults take about 12 minutes on a shared, busy 2-core machine. Seeds
 * are fixed. A quick look (about 3 minutes): {@code -Ddetection.years=10 -Ddetection.runs=20
 * -Ddetection.districtYears=3 -Ddetection.districtRuns=6 -Ddetection.arlRuns=400}. Results go to {@code deploy/target/detection.md}.
 */
@Tag("benchmark")
class DetectionQualityBenchmark {

    private static final Instant START = Instant.parse("2026-01-05T00:00:00Z");
    private static final Duration WEEK = Duration.ofDays(7);
    private static final int BASELINE_WEEKS = 12;
    private static final int CHANGE_AFTER_BASELINE = 4;
    private static final int CHANGE_WEEK = BASELINE_WEEKS + CHANGE_AFTER_BASELINE;
    private static final int FOLLOW_WEEKS = 6;
    private static final int ARL_RUNS = Integer.getInteger("detection.arlRuns", 2000);

    /** The detectors whose computed and simulated in-control run lengths are compared; add new ones here. */
    static final List<InControlRunLength> RUN_LENGTHS = List.of(
            new BernoulliCusumRunLength(SimulatedProgramme.house().meanPrevalence(
                    SimulatedProgramme.house().intercept(), 1), 1.5, 8, 1500),
            new BernoulliCusumRunLength(SimulatedProgramme.house().meanPrevalence(
                    SimulatedProgramme.house().intercept(), 1), 1 / 1.5, 8, 1500),
            new BernoulliCusumRunLength(SimulatedProgramme.districts().meanPrevalence(
                    SimulatedProgramme.districts().intercept(), 1), 1.5, 8, 1500),
            new BernoulliCusumRunLength(SimulatedProgramme.districts().meanPrevalence(
                    SimulatedProgramme.districts().intercept(), 1), 1 / 1.5, 8, 1500),
            // the limits the budget derives for the house scenario's two watched terms at the default
            // confidence 0.99 (k from each term's baseline standard error, h for 0.2 false alarms a year
            // at the 99 % quantile of a 12-week baseline's error; check prints them per stream)
            new StepCusumRunLength(1.54, 2.51), new StepCusumRunLength(1.11, 4.74));

    private static final Map<String, List<String>> SECTIONS = new TreeMap<>();
    private static final Map<String, Map<String, Integer>> FIT_STATES = new TreeMap<>();

    private static final String MONITOR = """
              - name: %s
                input: {topic: tests}
                event:
                  id: /id
                  time: /collectedAt
                  maxFutureSkew: P1D
                  outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
            %s
                terms:
                  - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                  - {name: recent_travel, field: /exposure/travel, kind: binary, level: "yes", reference: "no", watched: true}
                  - {name: age_band, field: /ageBand, kind: categorical, levels: ["0-17", "18-39", "40-64", "65+"], reference: "18-39"}
                  - {name: sex, field: /sex, kind: binary, level: male, reference: female}
                window: {width: %s, step: P7D, lateness: P2D, align: 2026-01-05T00:00:00Z}
                estimates: {level: 0.95, prevalenceInterval: wilson, minEventsPerParameter: 10}
                baseline: {from: 2026-01-05T00:00:00Z, to: 2026-03-30T00:00:00Z}
                rules:
                  calibration: {}
                  cusum: %s
            %s""";

    /**
     * Rule lines added to every monitor for a measurement away from the defaults (system properties):
     * {@code detection.drift} {@code on} or {@code off} lists the window z-rule explicitly (unset: the
     * defaults decide), {@code detection.falseAlarmsPerYear} sets the budget and {@code detection.budgetConfidence} its
     * confidence against the baseline's error; {@code detection.cusumUp} (below) the Bernoulli CUSUM's
     * upper multiplier.
     */
    private static final String EXTRA_RULES = extraRules();

    /** The Bernoulli CUSUM's section: {@code {}}, or {@code {up: R}} with {@code -Ddetection.cusumUp=R}. */
    private static final String CUSUM = System.getProperty("detection.cusumUp", "").isEmpty() ? "{}"
            : "{up: " + Double.parseDouble(System.getProperty("detection.cusumUp")) + "}";

    private static String extraRules() {
        StringBuilder b = new StringBuilder();
        String drift = System.getProperty("detection.drift", "");
        if (drift.equals("on") || drift.equals("off")) {
            b.append("      oddsRatioDrift: ").append(drift.equals("on") ? "{}" : "{enabled: false}").append('\n');
        }
        String budget = System.getProperty("detection.falseAlarmsPerYear", "");
        if (!budget.isEmpty()) {
            b.append("      falseAlarmsPerYear: ").append(Double.parseDouble(budget)).append('\n');
        }
        String confidence = System.getProperty("detection.budgetConfidence", "");
        if (!confidence.isEmpty()) {
            b.append("      budgetConfidence: ").append(Double.parseDouble(confidence)).append('\n');
        }
        return b.toString();
    }

    /**
     * One programme with its monitors.
     *
     * @param changedSite the site a change happens in (null: everywhere)
     * @param changedStreams the streams whose messages count as detecting the change
     */
    private record Setup(String label, SimulatedProgramme programme, String yaml, int widthWeeks, int years, int runs,
                         long seed, String changedSite, List<String> changedStreams, List<String> monitors) {
    }

    private static final Setup HOUSE = new Setup("house scenario (1 monitor, weekly windows)",
            SimulatedProgramme.house(),
            "monitors:\n" + MONITOR.formatted("respiratory", "", "P7D", CUSUM, EXTRA_RULES), 1,
            Integer.getInteger("detection.years", 50), Integer.getInteger("detection.runs", 100), 7_000_000L, null,
            List.of("respiratory"), List.of("respiratory"));

    private static final Setup DISTRICTS = new Setup(
            "sixteen districts (programme monitor + 16 district streams, 28-day windows stepped weekly)",
            SimulatedProgramme.districts(),
            "monitors:\n" + MONITOR.formatted("districts", "", "P28D", CUSUM, EXTRA_RULES)
                    + MONITOR.formatted("districts-by-site", "    split: {field: /site, maxStreams: 16}", "P28D",
                            CUSUM, EXTRA_RULES), 4,
            Integer.getInteger("detection.districtYears", 16), Integer.getInteger("detection.districtRuns", 30),
            17_000_000L, "d01", List.of("districts-by-site/d01"), List.of("districts", "districts-by-site"));

    /** What one simulated feed produced. */
    private static final class Outputs implements OutputSink {
        final List<Alert> alerts = new ArrayList<>();
        final List<Incident> incidents = new ArrayList<>();

        @Override
        public void alert(Alert alert, Published published) {
            alerts.add(alert);
        }

        @Override
        public void incident(Incident incident, Published published) {
            incidents.add(incident);
        }
    }

    private static Outputs run(Setup setup, long seed, int weeks, Change change) throws Exception {
        MonitorConfig config = DefinitionLoader.parse("detection.yaml", setup.yaml(), Map.of(), null);
        Outputs outputs = new Outputs();
        OutputStage stage = new OutputStage(config.monitors(), m -> List.of(outputs, new OutputSink() {
            @Override
            public void estimate(WindowEstimate estimate, Published published) {
                if (estimate.status() == WindowStatus.FINAL && estimate.fit() != null) {
                    FIT_STATES.computeIfAbsent(setup.label(), k -> new TreeMap<>())
                            .merge(estimate.fit().state().toString(), 1, Integer::sum);
                }
            }
        }));
        MonitorPipeline pipeline = new MonitorPipeline("simulated", config.monitorsFor("tests"), stage,
                PipelineSettings.defaults());
        long[] line = {0};
        setup.programme().feed(seed, START, weeks, change, json -> pipeline.offer(json.getBytes(StandardCharsets.UTF_8),
                RecordOrigin.line(++line[0]), false));
        pipeline.closeAll();
        return outputs;
    }

    private static Instant week(int w) {
        return START.plus(WEEK.multipliedBy(w));
    }

    /** Mean and its standard error over replicates. */
    private static String meanSe(double[] values) {
        int n = values.length;
        double mean = Arrays.stream(values).average().orElse(Double.NaN);
        double se = n < 2 ? Double.NaN
                : Math.sqrt(Arrays.stream(values).map(v -> (v - mean) * (v - mean)).sum() / (n - 1) / n);
        return String.format(Locale.ROOT, "%.2f (SE %.2f)", mean, se);
    }

    private static void row(String section, String text) {
        SECTIONS.computeIfAbsent(section, k -> new ArrayList<>()).add(text);
        System.out.println(section + ": " + text);
    }

    @Test
    void falseAlarmsWithoutChange() throws Exception {
        for (Setup setup : List.of(HOUSE, DISTRICTS)) {
            Instant from = week(BASELINE_WEEKS + setup.widthWeeks());
            Instant to = from.plus(WEEK.multipliedBy(52));
            int monitors = setup.monitors().size();
            double[][] episodes = new double[monitors][setup.years()];
            double[] incidents = new double[setup.years()];
            Map<String, Integer> byRule = new TreeMap<>();
            for (int y = 0; y < setup.years(); y++) {
                Outputs out = run(setup, setup.seed() + y, BASELINE_WEEKS + setup.widthWeeks() + 52, Change.none());
                for (Alert a : out.alerts) {
                    if (a.state() == AlertState.RAISED && a.windowEnd().isAfter(from) && !a.windowEnd().isAfter(to)) {
                        String monitor = a.stream().contains("/") ? a.stream().substring(0, a.stream().indexOf('/'))
                                : a.stream();
                        episodes[setup.monitors().indexOf(monitor)][y]++;
                        byRule.merge(a.rule() + " " + a.subject().label() + " (" + a.measure() + " " + a.direction() + ")", 1,
                                Integer::sum);
                    }
                }
                for (Incident i : out.incidents) {
                    if (i.change() == IncidentChange.OPENED && i.to().isAfter(from) && !i.to().isAfter(to)) {
                        incidents[y]++;
                    }
                }
            }
            StringBuilder b = new StringBuilder("| ").append(setup.label()).append(" | ").append(setup.years());
            for (int m = 0; m < monitors; m++) {
                b.append(" | ").append(setup.monitors().get(m)).append(": ").append(meanSe(episodes[m]));
            }
            if (monitors == 1) {
                b.append(" | ");
            }
            double[] perMonitor = Arrays.stream(incidents).map(v -> v / monitors).toArray();
            b.append(" | ").append(meanSe(incidents)).append(" | ").append(meanSe(perMonitor)).append(" | ")
                    .append(byRule).append(" |");
            row("1 false alarms", b.toString());
        }
    }

    /** Per run, the window (1, 2, ...) of the first counted message after the change; 0 when none within the follow-up. */
    private static int[] delays(List<Outputs> runs, Predicate<Alert> counts) {
        Instant change = week(CHANGE_WEEK);
        Instant last = change.plus(WEEK.multipliedBy(FOLLOW_WEEKS));
        int[] delays = new int[runs.size()];
        for (int r = 0; r < runs.size(); r++) {
            int best = 0;
            for (Alert a : runs.get(r).alerts) {
                if (a.state() != AlertState.CLEARED && counts.test(a) && a.windowEnd().isAfter(change)
                        && !a.windowEnd().isAfter(last)) {
                    long millis = a.windowEnd().toEpochMilli() - change.toEpochMilli();
                    int d = (int) ((millis + WEEK.toMillis() - 1) / WEEK.toMillis());
                    best = best == 0 ? d : Math.min(best, d);
                }
            }
            delays[r] = best;
        }
        return delays;
    }

    private static String share(int[] delays, int within) {
        int n = delays.length;
        double share = Arrays.stream(delays).filter(d -> d > 0 && d <= within).count() / (double) n;
        return String.format(Locale.ROOT, "%.2f (SE %.2f)", share, Math.sqrt(share * (1 - share) / n));
    }

    private static String delay(int[] delays) {
        double[] detected = Arrays.stream(delays).filter(d -> d > 0).asDoubleStream().toArray();
        if (detected.length == 0) {
            return "none detected";
        }
        return meanSe(detected) + ", " + (delays.length - detected.length) + " of " + delays.length
                + " not within " + FOLLOW_WEEKS;
    }

    private static void changeRows(Setup setup, Change change, Predicate<Alert> relevant, String relevantLabel,
                                   long seed) throws Exception {
        List<Outputs> runs = new ArrayList<>();
        for (int r = 0; r < setup.runs(); r++) {
            runs.add(run(setup, seed + r, CHANGE_WEEK + FOLLOW_WEEKS, change));
        }
        Predicate<Alert> onStream = a -> setup.changedStreams().contains(a.stream());
        int[] rule = delays(runs, onStream.and(relevant));
        int[] any = delays(runs, onStream);
        int[] anywhere = delays(runs, a -> true);
        row("2 delays", "| " + setup.label() + " | " + change.label() + " | " + setup.runs() + " | " + relevantLabel
                + ": " + share(rule, 2) + " | " + share(any, 2) + " | " + share(anywhere, 2) + " | " + share(rule, 3)
                + " | " + delay(rule) + " | " + delay(any) + " |");
    }

    private static Change change(Setup setup, Kind kind, double factor, String label) {
        return new Change(kind, factor, week(CHANGE_WEEK), setup.changedSite(),
                label + (setup.changedSite() == null ? "" : " in " + setup.changedSite()));
    }

    @Test
    void delaysAfterAChange() throws Exception {
        Predicate<Alert> drift = a -> (a.rule().equals("odds-ratio-drift") || a.rule().equals("odds-ratio-cusum"))
                && a.subject().label().equals("household_contact=yes");
        Predicate<Alert> level = a -> a.rule().equals("bernoulli-cusum-up") || a.rule().equals("calibration");
        Predicate<Alert> calibration = a -> a.rule().equals("calibration");
        for (Setup setup : List.of(HOUSE, DISTRICTS)) {
            changeRows(setup, change(setup, Kind.ODDS_RATIO, 2.0, "household-contact odds ratio x 2"), drift,
                    "drift or step CUSUM", setup.seed() + 100_000);
            changeRows(setup, change(setup, Kind.ODDS_RATIO, 0.5, "household-contact odds ratio x 0.5"), drift,
                    "drift or step CUSUM", setup.seed() + 200_000);
            changeRows(setup, change(setup, Kind.PREVALENCE, 1.3, "every probability x 1.3"), level,
                    "CUSUM up or calibration", setup.seed() + 300_000);
            changeRows(setup, change(setup, Kind.SLOPE, 0.6, "calibration slope x 0.6"), calibration,
                    "calibration", setup.seed() + 400_000);
        }
    }

    @Test
    void inControlRunLengthsComputedAndSimulated() {
        for (InControlRunLength detector : RUN_LENGTHS) {
            double computed = detector.computed();
            SplittableRandom rng = new SplittableRandom(5_000_000L + RUN_LENGTHS.indexOf(detector));
            double[] simulated = new double[ARL_RUNS];
            for (int i = 0; i < ARL_RUNS; i++) {
                simulated[i] = detector.simulateOnce(rng);
            }
            double mean = Arrays.stream(simulated).average().orElseThrow();
            double se = Math.sqrt(Arrays.stream(simulated).map(v -> (v - mean) * (v - mean)).sum() / (ARL_RUNS - 1)
                    / ARL_RUNS);
            row("3 run lengths", String.format(Locale.ROOT, "| %s | %,.0f | %,.0f (SE %,.0f) | %+.1f %% | %d |",
                    detector.label(), computed, mean, se, 100 * (computed / mean - 1), ARL_RUNS));
            // Source: Brook & Evans (1972), Biometrika 59:539 — the Markov-chain run length agrees with simulation.
            assertTrue(Math.abs(computed - mean) <= 4 * se, detector.label() + ": computed " + computed
                    + ", simulated " + mean + " (SE " + se + ")");
        }
    }

    @AfterAll
    static void write() throws IOException {
        Path out = Path.of("target", "detection.md");
        Files.createDirectories(out.getParent());
        StringBuilder b = new StringBuilder("# Detection quality of the current default alert rules\n\n");
        b.append(String.format(Locale.ROOT, "Generated by `DetectionQualityBenchmark`. Programmes: the house scenario "
                        + "(mean prevalence %.4f, 2,000 events a week) and sixteen districts (mean prevalence %.4f, "
                        + "3,200 events a week). Fixed 12-week baseline; default rules. Changes start %d weeks after the "
                        + "baseline (districts: in d01 only); window 1 is the first window ending after the change; "
                        + "follow-up %d windows. Standard errors are simulation errors.%n%n",
                HOUSE.programme().meanPrevalence(HOUSE.programme().intercept(), 1),
                DISTRICTS.programme().meanPrevalence(DISTRICTS.programme().intercept(), 1), CHANGE_AFTER_BASELINE,
                FOLLOW_WEEKS));
        b.append("Simulated data. On real data a signal calls for investigation; it is not a diagnosis or proof of "
                + "cause, and local public-health rules, data-protection law and qualified epidemiologists decide "
                + "what is done.\n\n");
        b.append("## False alarms per simulated year\n\n| programme | years | episodes per year, by monitor | | "
                + "incidents opened per year (all monitors) | incidents per monitor-year | episodes by rule and subject |\n"
                + "|---|---|---|---|---|---|---|\n");
        SECTIONS.getOrDefault("1 false alarms", List.of()).forEach(r -> b.append(r).append('\n'));
        b.append("\n## Delay to detection\n\nShares detected within 2 (and 3) windows; delay in windows among detected runs."
                + " \"Changed stream\": messages of any rule on the stream that changed (house: the monitor; districts:"
                + " d01's stream); \"anywhere\": any stream of the definition (the districts' programme monitor too).\n\n"
                + "| programme | change | runs | counted rule within 2 | any rule, changed stream, within 2 | anywhere "
                + "within 2 | counted rule within 3 | counted rule delay | any rule delay (changed stream) |\n"
                + "|---|---|---|---|---|---|---|---|---|\n");
        SECTIONS.getOrDefault("2 delays", List.of()).forEach(r -> b.append(r).append('\n'));
        b.append("\n## In-control run lengths (events to a false signal), computed and simulated\n\n"
                + "| detector | computed (Markov chain) | simulated | computed vs simulated | runs |\n|---|---|---|---|---|\n");
        SECTIONS.getOrDefault("3 run lengths", List.of()).forEach(r -> b.append(r).append('\n'));
        b.append("\nFit states of all final windows simulated (the guard lets only converged fits through): ")
                .append(FIT_STATES).append('\n');
        Files.writeString(out, b.toString(), StandardCharsets.UTF_8);
    }
}
