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

    /** Builds the scenario for a simulated span from {@code start}, with a share of defective records. */
    Scenario build(Instant start, Duration span, double defects) {
        try {
            ScenarioOptions options = ScenarioOptions.defaults().withSeed(seed).withEventsPerWeek(rate)
                    .withStart(start).withDuration(span).withDefectShare(defects);
            return Scenario.named(scenario, options);
        } catch (IllegalArgumentException e) {
            throw UserError.config(e.getMessage(), e);
        }
    }
}
