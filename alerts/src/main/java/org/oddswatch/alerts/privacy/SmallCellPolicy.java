package org.oddswatch.alerts.privacy;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.rules.Format;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The small-cell rule of every published output (estimates topic, {@code estimates.jsonl},
 * {@code /metrics}, alerts, {@code report.md}): a count {@code n} with {@code 0 < n < limit} is
 * withheld, and so is every figure it could be worked out from. Zero is not withheld (it discloses
 * nobody). The common practice is a limit of 5 (some agencies use 11); local disclosure rules
 * govern, so the limit is a setting ({@code outputs.withholdCountsBelow} of a monitor).
 *
 * <p>What one window estimate withholds ({@link #assess}):
 * <ul>
 *   <li>events from 1 to {@code limit - 1}: every count and figure of the window (events, positives,
 *       prevalence, strata, odds ratios, calibration, the fit's counts and log-likelihoods, notes);</li>
 *   <li>positives or negatives ({@code events - cases}) from 1 to {@code limit - 1}: the positives
 *       (they give the negatives by subtraction and the other way round), the prevalence, every
 *       stratum, the coefficients and odds ratios, the calibration, the fit's log-likelihoods (the
 *       intercept-only log-likelihood gives the positives) and the notes (they may name the rarer
 *       outcome's count); the events stay;</li>
 *   <li>a stratum whose events, positives or negatives are from 1 to {@code limit - 1}: that stratum's
 *       counts and prevalence; when exactly one stratum is withheld so, the shown stratum with the
 *       fewest events is withheld too, as the first could otherwise be worked out from the window's
 *       totals by subtraction;</li>
 *   <li>a calibration whose events, observed positives or observed negatives are from 1 to
 *       {@code limit - 1}: the calibration.</li>
 * </ul>
 * The alert rules read the full estimates inside the service; only published outputs pass through
 * this rule, identically in replay and live, so both stay equal.
 *
 * @param limit counts from 1 to {@code limit - 1} are withheld; at least 2
 */
public record SmallCellPolicy(int limit) {

    /** The limit unless a monitor sets another. */
    public static final int DEFAULT_LIMIT = 5;

    /** The policy with {@link #DEFAULT_LIMIT}. */
    public static final SmallCellPolicy DEFAULT = new SmallCellPolicy(DEFAULT_LIMIT);

    public SmallCellPolicy {
        if (limit < 2) {
            throw new IllegalArgumentException("the small-count limit must be at least 2, not " + limit);
        }
    }

    /** True for a count that is withheld: {@code 0 < n < limit}. */
    public boolean small(long n) {
        return n > 0 && n < limit;
    }

    /** The text shown in place of a withheld count, e.g. {@code <5}. */
    public String withheldLabel() {
        return "<" + limit;
    }

    /** A count for a text: {@link Format#count} or {@link #withheldLabel()} when small. */
    public String count(long n) {
        return small(n) ? withheldLabel() : Format.count(n);
    }

    /** What of one estimate is withheld (see the class description). */
    public Withheld assess(WindowEstimate e) {
        String window = null;
        if (small(e.events())) {
            window = range("events");
        } else if (small(e.cases())) {
            window = range("positives");
        } else if (small(e.events() - e.cases())) {
            window = range("negatives");
        }
        boolean eventsWithheld = small(e.events());
        List<String> strata = new ArrayList<>(e.strata().size());
        int primary = 0;
        for (StratumPrevalence s : e.strata()) {
            String reason = window != null ? RESTS_ON_WINDOW
                    : small(s.events()) ? range("stratum events")
                    : small(s.cases()) ? range("stratum positives")
                    : small(s.events() - s.cases()) ? range("stratum negatives")
                    : null;
            if (reason != null && window == null) {
                primary++;
            }
            strata.add(reason);
        }
        if (primary == 1) {
            int fewest = -1;
            for (int i = 0; i < strata.size(); i++) {
                if (strata.get(i) == null && (fewest < 0 || e.strata().get(i).events() < e.strata().get(fewest).events())) {
                    fewest = i;
                }
            }
            if (fewest >= 0) {
                strata.set(fewest, COMPLEMENTARY);
            }
        }
        String calibration = null;
        CalibrationEstimate c = e.calibration();
        if (c != null) {
            calibration = window != null ? RESTS_ON_WINDOW
                    : small(c.events()) ? range("calibration events")
                    : small(c.observed()) ? range("calibration positives")
                    : small(c.events() - c.observed()) ? range("calibration negatives")
                    : null;
        }
        return new Withheld(eventsWithheld ? window : null, window, strata, calibration);
    }

    /** The reason a small count of {@code what} is withheld, e.g. {@code "events from 1 to 4"}. */
    public String range(String what) {
        return what + " from 1 to " + (limit - 1);
    }

    /** Reason of a figure withheld because the window's counts are. */
    static final String RESTS_ON_WINDOW = "rests on a withheld count of the window";
    /** Reason of a stratum withheld so that another withheld stratum cannot be worked out. */
    static final String COMPLEMENTARY = "would reveal a withheld stratum by subtraction";

    /**
     * What one estimate withholds; each field is the reason, or null when shown.
     *
     * @param events reason the window's events (and everything else) are withheld
     * @param cases reason the positives and every figure resting on them are withheld
     * @param strata one reason (or null) per stratum, in the estimate's order
     * @param calibration reason the calibration is withheld
     */
    public record Withheld(String events, String cases, List<String> strata, String calibration) {

        public Withheld {
            strata = java.util.Collections.unmodifiableList(new ArrayList<>(strata));
        }

        /** True when nothing is withheld. */
        public boolean none() {
            return cases == null && calibration == null && strata.stream().allMatch(java.util.Objects::isNull);
        }

        /** True when stratum {@code i} is withheld. */
        public boolean stratum(int i) {
            return strata.get(i) != null;
        }
    }
}
