package org.oddswatch.alerts.rules;

import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.estimator.terms.Column;

/**
 * One watched design column a rule follows, with its per-term settings resolved.
 *
 * @param index the column's position in the baseline design (intercept = 0)
 */
record WatchedColumn(Column column, int index, AlertSubject subject, double limit, double clearLimit,
                     int consecutive, int clearAfter) {

    /** "household_contact=yes (against no)" or "age_years (per 10)". */
    String describe() {
        if (column.reference() != null) {
            return column.label() + " (against " + column.reference() + ")";
        }
        if (column.per() != null && column.per() != 1.0) {
            return column.label() + " (per " + Format.num(column.per()) + ")";
        }
        return column.label();
    }
}
