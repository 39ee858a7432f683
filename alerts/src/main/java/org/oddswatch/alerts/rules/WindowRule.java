package org.oddswatch.alerts.rules;

import java.util.List;
import org.oddswatch.estimator.result.WindowEstimate;

/** A rule that judges each final window estimate; one reading per subject it watches. */
public interface WindowRule {

    /** The rule name used in alerts and meters. */
    String name();

    /** Readings for this window, in a stable subject order. */
    List<Reading> evaluate(WindowEstimate estimate);
}
