package org.oddswatch.deploy.scenario;

import java.util.List;
import java.util.SplittableRandom;

/**
 * Who gets tested in the house scenario: the share of each exposure, age band, sex and clinic, and
 * the region each clinic lies in. All names are invented. Attributes are drawn independently.
 *
 * <table>
 *   <caption>Attribute distribution</caption>
 *   <tr><th>attribute</th><th>levels (share)</th></tr>
 *   <tr><td>household contact with a confirmed case</td><td>yes 0.30, no 0.70</td></tr>
 *   <tr><td>recent travel</td><td>yes 0.12, no 0.88</td></tr>
 *   <tr><td>age band</td><td>0-17 0.22, 18-39 0.34, 40-64 0.29, 65+ 0.15</td></tr>
 *   <tr><td>sex</td><td>female 0.51, male 0.49</td></tr>
 *   <tr><td>clinic (region)</td><td>harbourside 0.26, millbrook 0.18, fernhill 0.14 (north);
 *       eastgate 0.24, stonebridge 0.18 (south)</td></tr>
 * </table>
 */
public final class Population {

    public static final double HOUSEHOLD_SHARE = 0.30;
    public static final double TRAVEL_SHARE = 0.12;
    public static final WeightedLevels AGE_BANDS = new WeightedLevels(
            List.of("0-17", "18-39", "40-64", "65+"), new double[] {0.22, 0.34, 0.29, 0.15});
    public static final WeightedLevels SEXES = new WeightedLevels(List.of("female", "male"), new double[] {0.51, 0.49});
    public static final WeightedLevels CLINICS = new WeightedLevels(
            List.of("harbourside", "millbrook", "fernhill", "eastgate", "stonebridge"),
            new double[] {0.26, 0.18, 0.14, 0.24, 0.18});
    public static final List<String> REGIONS = List.of("north", "south");

    private Population() {
    }

    /** The region a clinic belongs to. */
    public static String regionOf(String clinic) {
        return switch (clinic) {
            case "harbourside", "millbrook", "fernhill" -> "north";
            case "eastgate", "stonebridge" -> "south";
            default -> throw new IllegalArgumentException("unknown clinic " + clinic);
        };
    }

    /** Draws one person's attributes, consuming exactly five uniforms from {@code rng}. */
    static ScenarioEvent.Person draw(SplittableRandom rng) {
        boolean household = rng.nextDouble() < HOUSEHOLD_SHARE;
        boolean travel = rng.nextDouble() < TRAVEL_SHARE;
        String age = AGE_BANDS.draw(rng);
        String sex = SEXES.draw(rng);
        String clinic = CLINICS.draw(rng);
        return new ScenarioEvent.Person(household, travel, age, sex, clinic, regionOf(clinic));
    }

    /** Levels with probabilities summing to 1. */
    public record WeightedLevels(List<String> levels, double[] shares) {

        public WeightedLevels {
            levels = List.copyOf(levels);
            shares = shares.clone();
            if (levels.size() != shares.length) {
                throw new IllegalArgumentException("one share per level");
            }
        }

        public double share(String level) {
            int i = levels.indexOf(level);
            return i < 0 ? 0 : shares[i];
        }

        String draw(SplittableRandom rng) {
            double u = rng.nextDouble();
            double cumulative = 0;
            for (int i = 0; i < shares.length - 1; i++) {
                cumulative += shares[i];
                if (u < cumulative) {
                    return levels.get(i);
                }
            }
            return levels.get(levels.size() - 1);
        }
    }
}
