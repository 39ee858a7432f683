package org.oddswatch.estimator;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.terms.Term;
import org.oddswatch.estimator.window.WindowStore;

/**
 * The invented house scenario for tests and benchmarks: a regional respiratory-illness testing
 * programme. True model (log-odds): intercept -2.4; household contact +0.9; age band 0-17 +0.2,
 * 30-49 +0.1, 50-69 +0.35, 70+ +0.7 (reference 18-29); male +0.15; region south -0.2, east +0.25,
 * west +0.05 (reference north); optional symptom days (continuous, 0-14) +0.08 per day.
 * Seeded: the same seed gives the same events.
 */
public final class HouseScenario {

    public static final List<String> AGE = List.of("0-17", "18-29", "30-49", "50-69", "70+");
    public static final List<String> REGION = List.of("north", "south", "east", "west");
    private static final double[] AGE_EFFECT = {0.2, 0, 0.1, 0.35, 0.7};
    private static final double[] REGION_EFFECT = {0, -0.2, 0.25, 0.05};

    /** One generated event: raw term values and the outcome. */
    public record Event(Object[] raw, boolean positive) {
    }

    private final SplittableRandom random;
    private final boolean numeric;
    private final double missingShare;

    public HouseScenario(long seed, boolean numeric, double missingShare) {
        this.random = new SplittableRandom(seed);
        this.numeric = numeric;
        this.missingShare = missingShare;
    }

    /** The terms: contact (watched), age band, sex, region, and optionally symptom days. */
    public static List<Term> terms(boolean numeric) {
        List<Term> terms = new ArrayList<>(List.of(
                new BinaryTerm("household_contact", "yes", "no", null, true),
                new CategoricalTerm("age_band", AGE, "18-29", null, null, false),
                new BinaryTerm("sex", "male", "female", null, false),
                new CategoricalTerm("region", REGION, "north", null, null, false)));
        if (numeric) {
            terms.add(new NumericTerm("symptom_days", 1, true));
        }
        return terms;
    }

    public static DesignCoder coder(boolean numeric) {
        return new DesignCoder(terms(numeric));
    }

    public Event next() {
        boolean contact = random.nextDouble() < 0.3;
        int age = random.nextInt(AGE.size());
        boolean male = random.nextBoolean();
        int region = random.nextInt(REGION.size());
        double days = Math.floor(random.nextDouble() * 14_000) / 1000;
        double eta = -2.4 + (contact ? 0.9 : 0) + AGE_EFFECT[age] + (male ? 0.15 : 0) + REGION_EFFECT[region]
                + (numeric ? 0.08 * days - 0.5 : 0);
        boolean positive = random.nextDouble() < 1 / (1 + Math.exp(-eta));
        Object sex = random.nextDouble() < missingShare ? null : male ? "male" : "female";
        Object[] raw = numeric
                ? new Object[] {contact ? "yes" : "no", AGE.get(age), sex, REGION.get(region), days}
                : new Object[] {contact ? "yes" : "no", AGE.get(age), sex, REGION.get(region)};
        return new Event(raw, positive);
    }

    /** Codes an event and adds it to the store, stratified by region (missing covariates: row null). */
    public static void add(DesignCoder coder, WindowStore store, long bucket, Event event, double[] row) {
        CodingOutcome outcome = coder.code(event.raw(), row);
        if (outcome.isRejected()) {
            throw new IllegalStateException(outcome.toString());
        }
        int stratum = REGION.indexOf((String) event.raw()[3]);
        store.add(bucket, outcome.isOk() ? row : null, event.positive(), stratum);
    }
}
