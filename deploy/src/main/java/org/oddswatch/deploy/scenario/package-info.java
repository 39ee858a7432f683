/**
 * Simulated feeds for demonstrations, tests and detection studies: the house scenario, a regional
 * respiratory-illness testing programme we invented (five clinics in two regions; household contact
 * with a confirmed case, recent travel, age band, sex). The true parameters are written in
 * {@link org.oddswatch.deploy.scenario.TruthModel} and {@link org.oddswatch.deploy.scenario.Population},
 * the scripts in {@link org.oddswatch.deploy.scenario.Scenario}; {@code deploy/SCENARIOS.md} has the
 * same in prose. Pure Java, seeded {@link java.util.SplittableRandom}, deterministic.
 */
package org.oddswatch.deploy.scenario;
