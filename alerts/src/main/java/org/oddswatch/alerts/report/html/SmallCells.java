package org.oddswatch.alerts.report.html;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The small-cell rule of the replay report applied to what the HTML report charts: a count {@code n}
 * with {@code 0 < n < limit} is withheld, and so is every figure it could be worked out from.
 * Withheld figures are left out of the page's data (a gap in the chart), never drawn.
 * <ul>
 *   <li>events from 1 to {@code limit - 1}: every figure of the window;</li>
 *   <li>positives or negatives from 1 to {@code limit - 1}: positives, prevalence, strata, odds
 *       ratios, calibration and fit notes (the events stay);</li>
 *   <li>a stratum whose events, positives or negatives are small: that stratum; when exactly one
 *       stratum is withheld so, the shown stratum with the fewest events too (else it could be worked
 *       out from the window's totals by subtraction);</li>
 *   <li>a calibration whose events, observed positives or negatives are small: the calibration.</li>
 * </ul>
 *
 * @param limit counts from 1 to {@code limit - 1} are withheld; at least 2
 */
record SmallCells(int limit) {

    SmallCells {
        if (limit < 2) {
            throw new IllegalArgumentException("the small-count limit must be at least 2, not " + limit);
        }
    }

    boolean small(long n) {
        return n > 0 && n < limit;
    }

    /** What one estimate withholds. */
    Withheld assess(WindowEstimate e) {
        boolean events = small(e.events());
        boolean cases = events || small(e.cases()) || small(e.events() - e.cases());
        List<Boolean> strata = new ArrayList<>(e.strata().size());
        int primary = 0;
        for (StratumPrevalence s : e.strata()) {
            boolean hidden = cases || small(s.events()) || small(s.cases()) || small(s.events() - s.cases());
            primary += hidden && !cases ? 1 : 0;
            strata.add(hidden);
        }
        if (primary == 1) {
            int fewest = -1;
            for (int i = 0; i < strata.size(); i++) {
                if (!strata.get(i) && (fewest < 0 || e.strata().get(i).events() < e.strata().get(fewest).events())) {
                    fewest = i;
                }
            }
            if (fewest >= 0) {
                strata.set(fewest, true);
            }
        }
        CalibrationEstimate c = e.calibration();
        boolean calibration = c != null
                && (cases || small(c.events()) || small(c.observed()) || small(c.events() - c.observed()));
        return new Withheld(events, cases, strata, calibration);
    }

    /** Which figures of one window are withheld. */
    record Withheld(boolean events, boolean cases, List<Boolean> strata, boolean calibration) {
    }
}
