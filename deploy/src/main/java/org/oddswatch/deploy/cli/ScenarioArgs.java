package org.oddswatch.deploy.cli;

import java.time.Duration;
import java.time.Instant;
import org.oddswatch.deploy.scenario.Scenario;
import org.oddswatch.deploy.scenario.ScenarioOptions;
import picocli.CommandLine.Option;

/** Options choosing and shaping a simulated feed ({@code simulate}, {@code sandbox}). */
final class ScenarioArgs {

    @Option(names = "--scenario", paramLabel = "NAME", defaultValue = Scenario.RESPIRATORY,
            description = "Scenario: respiratory (odds-ratio doubling at week 16, prevalence rise at week 26) or steady (no drift). Default: ${DEFAULT-VALUE}.")
    String scenario;

    @Option(names = "--seed", paramLabel = "N", defaultValue = "" + ScenarioOptions.DEFAULT_SEED,
            description = "Seed of the random generator; the same seed gives the same records. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Option(names = "--rate", paramLabel = "EVENTS", defaultValue = "2000",
            description = "Mean events per simulated week. Default: ${DEFAULT-VALUE}.")
    double rate;

    @Option(names = "--start", paramLabel = "TIME", defaultValue = "2026-01-05T00:00:00Z",
            description = "Simulated start (RFC 3339 or a date). Default: ${DEFAULT-VALUE}.")
    Instant start;

    @Option(names = "--defects", paramLabel = "SHARE", defaultValue = "0",
            description = "Share of extra malformed, late and duplicate records (0 to 1). Default: ${DEFAULT-VALUE}.")
    double defects;

    /** Builds the scenario for a simulated span. */
    Scenario build(Duration span) {
        try {
            ScenarioOptions options = ScenarioOptions.defaults().withSeed(seed).withEventsPerWeek(rate)
                    .withStart(start).withDuration(span).withDefectShare(defects);
            return Scenario.named(scenario, options);
        } catch (IllegalArgumentException e) {
            throw UserError.config(e.getMessage(), e);
        }
    }
}
