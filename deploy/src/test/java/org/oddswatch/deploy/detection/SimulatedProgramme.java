package org.oddswatch.deploy.detection;

import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.function.Consumer;
import org.oddswatch.deploy.scenario.Population;
import org.oddswatch.deploy.scenario.TruthModel;

/**
 * A testing programme for the detection harness: people with household contact, recent travel, an
 * age band, a sex and a site (clinic or district), and a logistic truth model
 * {@code logit p = b0 + b_household + b_travel + b_age + b_sex + b_site}, with at most one change at a
 * known time, optionally in one site only. Events are evenly spaced in time.
 *
 * <p>Two programmes: {@link #house()}, the house scenario's population and truth model
 * ({@link Population}, {@link TruthModel}: 2,000 events a week, 30 % household contact, about 5 %
 * prevalence, five clinics), drawn here because the scenario script has no calibration-slope change;
 * and {@link #districts()}, a programme of our own: sixteen alike districts, 3,200 events a week,
 * 40 % household contact (odds ratio 2.0), about 12 % prevalence.
 *
 * @param name label in the report
 * @param eventsPerWeek events a week over all sites
 * @param intercept b0
 * @param household household-contact share and log odds ratio
 * @param travel recent-travel share and log odds ratio
 * @param ageShares shares of the age bands {@code 0-17, 18-39, 40-64, 65+}
 * @param ageEffects their log odds ratios (18-39 the reference, 0)
 * @param maleShare share of males
 * @param maleEffect log odds ratio of male sex
 * @param sites site names
 * @param siteShares their shares
 * @param siteEffects their log odds ratios
 */
record SimulatedProgramme(String name, double eventsPerWeek, double intercept, double[] household, double[] travel,
                          double[] ageShares, double[] ageEffects, double maleShare, double maleEffect,
                          List<String> sites, double[] siteShares, double[] siteEffects) {

    static final String[] AGE_BANDS = {"0-17", "18-39", "40-64", "65+"};

    /** What changes, from when, and where. */
    enum Kind { NONE, ODDS_RATIO, PREVALENCE, SLOPE }

    /**
     * @param kind what changes: the household-contact odds ratio times {@code factor}; every
     *     probability times {@code factor} (capped at 1); the calibration slope times {@code factor}
     *     ({@code logit p = b0' + factor·(eta − b0)}, {@code b0'} chosen so the programme's mean
     *     prevalence stays as before)
     * @param at when it starts
     * @param site the one site it happens in, or null for all
     */
    record Change(Kind kind, double factor, Instant at, String site, String label) {
        static Change none() {
            return new Change(Kind.NONE, 1, Instant.MAX, null, "no change");
        }
    }

    static SimulatedProgramme house() {
        double[] clinicEffects = Population.CLINICS.levels().stream()
                .mapToDouble(c -> TruthModel.coefficient("clinic", c)).toArray();
        double[] ageEffects = new double[AGE_BANDS.length];
        for (int i = 0; i < AGE_BANDS.length; i++) {
            ageEffects[i] = TruthModel.coefficient("age_band", AGE_BANDS[i]);
        }
        return new SimulatedProgramme("house scenario", 2000, TruthModel.coefficient(TruthModel.INTERCEPT, null),
                new double[] {Population.HOUSEHOLD_SHARE, TruthModel.coefficient("household_contact", "yes")},
                new double[] {Population.TRAVEL_SHARE, TruthModel.coefficient("recent_travel", "yes")},
                Population.AGE_BANDS.shares(), ageEffects, Population.SEXES.shares()[1],
                TruthModel.coefficient("sex", "male"), Population.CLINICS.levels(), Population.CLINICS.shares(),
                clinicEffects);
    }

    static SimulatedProgramme districts() {
        List<String> names = new ArrayList<>();
        for (int d = 1; d <= 16; d++) {
            names.add(String.format("d%02d", d));
        }
        double[] shares = new double[16];
        java.util.Arrays.fill(shares, 1.0 / 16);
        return new SimulatedProgramme("sixteen districts", 3200, -2.55, new double[] {0.40, Math.log(2.0)},
                new double[] {0.10, Math.log(1.5)}, new double[] {0.25, 0.35, 0.25, 0.15},
                new double[] {Math.log(0.8), 0, Math.log(1.2), Math.log(1.5)}, 0.5, Math.log(1.1), names, shares,
                new double[16]);
    }

    /** The mean probability of a positive result over the population, exactly (a sum over attribute combinations). */
    double meanPrevalence(double b0, double slope) {
        double sum = 0;
        for (int h = 0; h < 2; h++) {
            for (int t = 0; t < 2; t++) {
                for (int a = 0; a < AGE_BANDS.length; a++) {
                    for (int m = 0; m < 2; m++) {
                        for (int s = 0; s < sites.size(); s++) {
                            double w = (h == 1 ? household[0] : 1 - household[0]) * (t == 1 ? travel[0] : 1 - travel[0])
                                    * ageShares[a] * (m == 1 ? maleShare : 1 - maleShare) * siteShares[s];
                            double x = h * household[1] + t * travel[1] + ageEffects[a] + m * maleEffect + siteEffects[s];
                            sum += w / (1 + Math.exp(-(b0 + slope * x)));
                        }
                    }
                }
            }
        }
        return sum;
    }

    /** The intercept that keeps the mean prevalence when the slope is {@code slope} (bisection). */
    double interceptForSlope(double slope) {
        double target = meanPrevalence(intercept, 1);
        double lo = intercept - 10;
        double hi = intercept + 10;
        for (int i = 0; i < 100; i++) {
            double mid = (lo + hi) / 2;
            if (meanPrevalence(mid, slope) < target) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        return (lo + hi) / 2;
    }

    /** Feeds the JSON of every event from {@code start} for {@code weeks} weeks, in time order. */
    void feed(long seed, Instant start, int weeks, Change change, Consumer<String> out) {
        SplittableRandom rng = new SplittableRandom(seed);
        long count = Math.round(eventsPerWeek * weeks);
        long stepMillis = Duration.ofDays(7).toMillis() * weeks / count;
        double slopeIntercept = change.kind() == Kind.SLOPE ? interceptForSlope(change.factor()) : intercept;
        for (long i = 0; i < count; i++) {
            Instant time = start.plusMillis(i * stepMillis);
            int site = draw(rng, siteShares);
            boolean h = rng.nextDouble() < household[0];
            boolean t = rng.nextDouble() < travel[0];
            int age = draw(rng, ageShares);
            boolean male = rng.nextDouble() < maleShare;
            double x = (h ? household[1] : 0) + (t ? travel[1] : 0) + ageEffects[age] + (male ? maleEffect : 0)
                    + siteEffects[site];
            boolean changed = change.kind() != Kind.NONE && !time.isBefore(change.at())
                    && (change.site() == null || change.site().equals(sites.get(site)));
            double eta = intercept + x;
            double p;
            if (changed && change.kind() == Kind.SLOPE) {
                p = 1 / (1 + Math.exp(-(slopeIntercept + change.factor() * x)));
            } else {
                if (changed && change.kind() == Kind.ODDS_RATIO && h) {
                    eta += Math.log(change.factor());
                }
                p = 1 / (1 + Math.exp(-eta));
                if (changed && change.kind() == Kind.PREVALENCE) {
                    p = Math.min(1, p * change.factor());
                }
            }
            boolean positive = rng.nextDouble() < p;
            out.accept("{\"id\":\"e" + seed + "-" + i + "\",\"collectedAt\":\"" + time + "\",\"result\":\""
                    + (positive ? "positive" : "negative") + "\",\"exposure\":{\"household\":\"" + (h ? "yes" : "no")
                    + "\",\"travel\":\"" + (t ? "yes" : "no") + "\"},\"ageBand\":\"" + AGE_BANDS[age]
                    + "\",\"sex\":\"" + (male ? "male" : "female") + "\",\"site\":\"" + sites.get(site) + "\"}");
        }
    }

    private static int draw(SplittableRandom rng, double[] shares) {
        double u = rng.nextDouble();
        for (int i = 0; i < shares.length - 1; i++) {
            u -= shares[i];
            if (u < 0) {
                return i;
            }
        }
        return shares.length - 1;
    }
}
