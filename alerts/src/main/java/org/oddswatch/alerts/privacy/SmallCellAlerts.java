package org.oddswatch.alerts.privacy;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.alerts.lifecycle.WithheldFigure;
import org.oddswatch.alerts.rules.CalibrationRule;

/**
 * The small-cell rule for alerts: an alert withholds what the estimate of its window withholds. The
 * figures of an alert (its measured {@code value}, the {@code observed} and {@code baseline} values,
 * and the evidence's {@code z}, CUSUM value and interval) are statistics of the window's events, so
 * they are withheld whenever the window estimate withholds its coefficients, odds ratios and chart
 * values ({@link SmallCellPolicy#assess}: events, positives or negatives from 1 to {@code limit - 1}),
 * a calibration alert also when the estimate withholds its calibration, and any alert whose own
 * events (a CUSUM excursion, a step of new events) are a small count. The state, window, rule,
 * subject, measure name, limits, direction and the run of windows stay: they say that a limit was
 * crossed, which is the alert itself, not how far. Applied where the alert is made, so every output
 * (alerts topic and file, webhook, log, live page, reports, incidents) carries the same withheld
 * alert; deterministic like the rules.
 */
public final class SmallCellAlerts {

    private SmallCellAlerts() {
    }

    /**
     * Why the figures of an alert are withheld, or null when none is.
     *
     * @param rule the rule that gave the reading (calibration alerts also follow the estimate's calibration)
     * @param events the events the reading rests on (the alert's {@code events})
     * @param window what the estimate of the final window the reading was made at withholds (null: none known)
     */
    public static String reason(String rule, long events, SmallCellPolicy.Withheld window, SmallCellPolicy cells) {
        if (cells.small(events)) {
            return cells.range("events");
        }
        if (window == null) {
            return null;
        }
        if (window.cases() != null) {
            return window.cases();
        }
        return CalibrationRule.NAME.equals(rule) ? window.calibration() : null;
    }

    /**
     * The alert with its figures left out and listed in {@code withheld} with {@code reason} (only
     * those it had); the message is the caller's, already written without them.
     */
    public static Alert withhold(Alert a, String reason) {
        List<WithheldFigure> withheld = new ArrayList<>();
        add(withheld, "value", a.value(), reason);
        add(withheld, "observed", a.observed(), reason);
        add(withheld, "baseline", a.baseline(), reason);
        Evidence e = a.evidence();
        Evidence kept = e;
        if (e != null) {
            add(withheld, "evidence.z", e.z(), reason);
            add(withheld, "evidence.cusum", e.cusum(), reason);
            add(withheld, "evidence.lower", e.lower(), reason);
            add(withheld, "evidence.upper", e.upper(), reason);
            kept = new Evidence(null, null, null, null, e.consecutiveWindows());
        }
        return new Alert(a.id(), a.stream(), a.rule(), a.subject(), a.state(), a.windowStart(), a.windowEnd(),
                a.measure(), null, a.direction(), null, null, a.limit(), a.clearLimit(), kept, a.events(), a.message(),
                a.replayCommand(), withheld);
    }

    private static void add(List<WithheldFigure> withheld, String field, Double value, String reason) {
        if (value != null) {
            withheld.add(new WithheldFigure(field, reason));
        }
    }
}
