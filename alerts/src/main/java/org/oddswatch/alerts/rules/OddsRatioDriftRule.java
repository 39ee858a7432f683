package org.oddswatch.alerts.rules;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioDrift;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermLimits;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.terms.Column;

/**
 * Odds-ratio drift of each watched coefficient against the frozen baseline:
 * {@code z = (b_now - b_base) / sqrt(se_now^2 + se_base^2)}, treating the window and the baseline
 * as independent samples. {@link Zone#BEYOND} when {@code |z| >= limit} (direction = sign of z),
 * {@link Zone#INSIDE} when {@code |z| < clearLimit}, {@link Zone#BETWEEN} otherwise; a window the
 * guard refuses, or in which the coefficient or its standard error is missing (a dropped column),
 * is {@link Zone#UNKNOWN}.
 */
public final class OddsRatioDriftRule implements WindowRule {

    public static final String NAME = "odds-ratio-drift";

    private final InformationGuard guard;
    private final BaselineModel baseline;
    private final List<WatchedColumn> watched;

    /**
     * @param settings the rule's section; an empty {@code terms} list means every watched column of the baseline
     */
    public OddsRatioDriftRule(OddsRatioDrift settings, InformationGuard guard, BaselineModel baseline) {
        this.guard = guard;
        this.baseline = baseline;
        this.watched = new ArrayList<>();
        List<Column> columns = baseline.columns();
        for (int j = 0; j < columns.size(); j++) {
            Column c = columns.get(j);
            if (c.isIntercept()) {
                continue;
            }
            TermLimits chosen = null;
            if (settings.terms().isEmpty()) {
                if (!c.watched()) {
                    continue;
                }
            } else {
                chosen = settings.terms().stream().filter(t -> t.selects(c.term(), c.level())).findFirst().orElse(null);
                if (chosen == null) {
                    continue;
                }
            }
            double limit = chosen != null && chosen.limit() != null ? chosen.limit() : settings.limit();
            double clear = chosen != null && chosen.clearLimit() != null ? chosen.clearLimit()
                    : Math.min(settings.clearLimit(), limit);
            int k = chosen != null && chosen.consecutive() != null ? chosen.consecutive() : settings.consecutive();
            int m = chosen != null && chosen.clearAfter() != null ? chosen.clearAfter() : settings.clearAfter();
            watched.add(new WatchedColumn(c, j, new AlertSubject(c.term(), c.level()), limit, clear, k, m));
        }
    }

    @Override
    public String name() {
        return NAME;
    }

    @Override
    public List<Reading> evaluate(WindowEstimate e) {
        String refusal = e.fit() == null ? "no model fit" : guard.refusal(e.fit(), e.fit().events());
        List<Reading> out = new ArrayList<>(watched.size());
        for (WatchedColumn w : watched) {
            out.add(read(e, w, refusal));
        }
        return out;
    }

    private Reading read(WindowEstimate e, WatchedColumn w, String refusal) {
        double bBase = baseline.coefficient(w.column().term(), w.column().level());
        double seBase = baseline.standardError(w.column().term(), w.column().level());
        CoefficientEstimate now = e.coefficient(w.column().term(), w.column().level());
        long events = e.fit() == null ? 0 : e.fit().events();
        if (refusal == null && (now == null || now.se() == null || !Double.isFinite(now.se()) || !(now.se() > 0))) {
            refusal = "no standard error for " + w.subject().label();
        }
        if (refusal == null && !(Double.isFinite(bBase) && Double.isFinite(seBase))) {
            refusal = "the baseline has no usable coefficient for " + w.subject().label();
        }
        if (refusal != null) {
            return new Reading(NAME, w.subject(), Zone.UNKNOWN, 0, w.consecutive(), w.clearAfter(), e.windowStart(),
                    e.windowEnd(), null, Math.exp(bBase), w.limit(), w.clearLimit(), null, events, refusal,
                    new Measurement(Measurement.ODDS_RATIO_Z, null, null));
        }
        double z = (now.coef() - bBase) / Math.sqrt(now.se() * now.se() + seBase * seBase);
        Zone zone = Math.abs(z) >= w.limit() ? Zone.BEYOND : Math.abs(z) < w.clearLimit() ? Zone.INSIDE : Zone.BETWEEN;
        int direction = zone == Zone.BEYOND ? (z > 0 ? 1 : -1) : 0;
        double orNow = Math.exp(now.coef());
        double orBase = Math.exp(bBase);
        String detail = "the odds ratio of " + w.describe() + " is " + Format.num(orNow)
                + " (interval " + Format.num(now.lower()) + " to " + Format.num(now.upper()) + "), "
                + (orNow >= orBase ? "up" : "down") + " from " + Format.num(orBase) + " in the baseline"
                + " (" + Format.num(orNow / orBase) + " times the baseline odds ratio); drift z = " + Format.stat(z)
                + " against a limit of " + Format.stat(w.limit()) + " either way (clears below " + Format.stat(w.clearLimit())
                + ")";
        return new Reading(NAME, w.subject(), zone, direction, w.consecutive(), w.clearAfter(), e.windowStart(),
                e.windowEnd(), orNow, orBase, w.limit(), w.clearLimit(),
                new Evidence(z, null, now.lower(), now.upper(), null), events, detail,
                new Measurement(Measurement.ODDS_RATIO_Z, z, direction > 0 ? Measurement.Side.ABOVE
                        : direction < 0 ? Measurement.Side.BELOW : null));
    }
}
