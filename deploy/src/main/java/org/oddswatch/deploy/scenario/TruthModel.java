package org.oddswatch.deploy.scenario;

import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * The logistic model that generates outcomes in the house scenario, before any scripted change:
 * <pre>
 *   logit P(positive) = b0 + b_household·[household = yes] + b_travel·[travel = yes]
 *                     + b_age[age band] + b_sex·[sex = male] + b_clinic[clinic]
 * </pre>
 * with the reference levels household no, travel no, age band 18-39, sex female, clinic harbourside.
 *
 * <table>
 *   <caption>True parameters (coefficient = ln odds ratio)</caption>
 *   <tr><th>key</th><th>odds ratio</th><th>coefficient</th></tr>
 *   <tr><td>intercept</td><td></td><td>-3.55</td></tr>
 *   <tr><td>household_contact=yes</td><td>2.5</td><td>0.9163</td></tr>
 *   <tr><td>recent_travel=yes</td><td>1.8</td><td>0.5878</td></tr>
 *   <tr><td>age_band=0-17</td><td>0.7</td><td>-0.3567</td></tr>
 *   <tr><td>age_band=40-64</td><td>1.25</td><td>0.2231</td></tr>
 *   <tr><td>age_band=65+</td><td>1.6</td><td>0.4700</td></tr>
 *   <tr><td>sex=male</td><td>1.15</td><td>0.1398</td></tr>
 *   <tr><td>clinic=millbrook</td><td>1.105</td><td>0.10</td></tr>
 *   <tr><td>clinic=fernhill</td><td>0.923</td><td>-0.08</td></tr>
 *   <tr><td>clinic=eastgate</td><td>1.051</td><td>0.05</td></tr>
 *   <tr><td>clinic=stonebridge</td><td>0.887</td><td>-0.12</td></tr>
 * </table>
 * Over the {@link Population}, this gives a marginal prevalence of 0.0501 (exact sum over the 160
 * attribute combinations, see {@link Scenario#expectedPrevalence}).
 */
public final class TruthModel {

    public static final String INTERCEPT = "intercept";

    private static final Map<String, Double> COEFFICIENTS;

    static {
        Map<String, Double> c = new LinkedHashMap<>();
        c.put(INTERCEPT, -3.55);
        c.put(key("household_contact", "yes"), Math.log(2.5));
        c.put(key("recent_travel", "yes"), Math.log(1.8));
        c.put(key("age_band", "0-17"), Math.log(0.7));
        c.put(key("age_band", "40-64"), Math.log(1.25));
        c.put(key("age_band", "65+"), Math.log(1.6));
        c.put(key("sex", "male"), Math.log(1.15));
        c.put(key("clinic", "millbrook"), 0.10);
        c.put(key("clinic", "fernhill"), -0.08);
        c.put(key("clinic", "eastgate"), 0.05);
        c.put(key("clinic", "stonebridge"), -0.12);
        COEFFICIENTS = Collections.unmodifiableMap(c);
    }

    private TruthModel() {
    }

    /** {@code term=level}, the key of one indicator. */
    public static String key(String term, String level) {
        return level == null ? term : term + "=" + level;
    }

    /** All true coefficients, intercept first, keyed {@code term=level}. */
    public static Map<String, Double> coefficients() {
        return COEFFICIENTS;
    }

    /** The true coefficient of {@code term = level}: 0 for a reference level, the intercept for {@code "intercept"}. */
    public static double coefficient(String term, String level) {
        return COEFFICIENTS.getOrDefault(key(term, level), 0.0);
    }

    /** The indicator keys that are 1 for this person (the intercept excluded). */
    static String[] indicators(ScenarioEvent.Person p) {
        return new String[] {
            key("household_contact", p.household() ? "yes" : "no"),
            key("recent_travel", p.travel() ? "yes" : "no"),
            key("age_band", p.ageBand()),
            key("sex", p.sex()),
            key("clinic", p.clinic())};
    }

    /** The linear predictor before any scripted change. */
    static double logOdds(ScenarioEvent.Person p) {
        double eta = COEFFICIENTS.get(INTERCEPT);
        for (String k : indicators(p)) {
            eta += COEFFICIENTS.getOrDefault(k, 0.0);
        }
        return eta;
    }

    static double logistic(double eta) {
        return 1 / (1 + Math.exp(-eta));
    }
}
