package org.oddswatch.alerts.rules;

import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig.OddsRatioBounds;
import org.oddswatch.alerts.engine.AlertRulesConfig.TermBounds;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Odds-ratio bounds: {@link Zone#BEYOND} (+1) when the watched odds ratio's whole interval lies
 * above {@code above}, (-1) when it lies wholly below {@code below}; {@link Zone#INSIDE} when the
 * point estimate is back within the bounds; {@link Zone#BETWEEN} otherwise (point outside, interval
 * still touching the bound). Needs no baseline. A bound entry without a level applies to every level
 * of the term, in the order the estimate lists them.
 */
public final class OddsRatioBoundsRule implements WindowRule {

    public static final String NAME = "odds-ratio-bounds";

    private final OddsRatioBounds settings;
    private final InformationGuard guard;

    public OddsRatioBoundsRule(OddsRatioBounds settings, InformationGuard guard) {
        this.settings = settings;
        this.guard = guard;
    }

    @Override
    public String name() {
        return NAME;
    }

    @Override
    public List<Reading> evaluate(WindowEstimate e) {
        String refusal = e.fit() == null ? "no model fit" : guard.refusal(e.fit(), e.fit().events());
        long events = e.fit() == null ? 0 : e.fit().events();
        List<Reading> out = new ArrayList<>();
        for (TermBounds b : settings.terms()) {
            List<CoefficientEstimate> matching = e.coefficients().stream()
                    .filter(c -> c.term().equals(b.term()) && (b.level() == null || b.level().equals(c.level())))
                    .toList();
            if (matching.isEmpty()) {
                AlertSubject subject = new AlertSubject(b.term(), b.level());
                out.add(unknown(e, subject, b, events, "no coefficient for " + subject.label()));
            }
            for (CoefficientEstimate c : matching) {
                AlertSubject subject = new AlertSubject(c.term(), c.level());
                if (refusal != null || c.lower() == null || c.upper() == null || c.oddsRatio() == null) {
                    out.add(unknown(e, subject, b, events, refusal != null ? refusal : "no interval for " + subject.label()));
                    continue;
                }
                out.add(judge(e, subject, b, c, events));
            }
        }
        return out;
    }

    private Reading judge(WindowEstimate e, AlertSubject subject, TermBounds b, CoefficientEstimate c, long events) {
        double or = c.oddsRatio();
        Zone zone;
        int direction = 0;
        Double crossed = null;
        if (b.above() != null && c.lower() > b.above()) {
            zone = Zone.BEYOND;
            direction = 1;
            crossed = b.above();
        } else if (b.below() != null && c.upper() < b.below()) {
            zone = Zone.BEYOND;
            direction = -1;
            crossed = b.below();
        } else if ((b.above() == null || or <= b.above()) && (b.below() == null || or >= b.below())) {
            zone = Zone.INSIDE;
        } else {
            zone = Zone.BETWEEN;
        }
        String bounds = (b.below() != null ? "at least " + Format.num(b.below()) : "")
                + (b.below() != null && b.above() != null ? " and " : "")
                + (b.above() != null ? "at most " + Format.num(b.above()) : "");
        String detail = "the odds ratio of " + subject.label()
                + (c.reference() != null ? " (against " + c.reference() + ")" : "") + " is " + Format.num(or)
                + " with interval " + Format.num(c.lower()) + " to " + Format.num(c.upper())
                + (direction > 0 ? ", wholly above" : direction < 0 ? ", wholly below" : ", against")
                + " the set bound" + (crossed != null ? " of " + Format.num(crossed) : "s (" + bounds + ")");
        double limit = crossed != null ? crossed : b.above() != null ? b.above() : b.below();
        return new Reading(NAME, subject, zone, direction, settings.consecutive(), settings.clearAfter(),
                e.windowStart(), e.windowEnd(), or, null, limit, limit, new Evidence(null, null, c.lower(), c.upper(), null),
                events, detail, new Measurement(Measurement.ODDS_RATIO, or, direction > 0 ? Measurement.Side.ABOVE
                        : direction < 0 ? Measurement.Side.BELOW : null));
    }

    private Reading unknown(WindowEstimate e, AlertSubject subject, TermBounds b, long events, String why) {
        Double limit = b.above() != null ? b.above() : b.below();
        return new Reading(NAME, subject, Zone.UNKNOWN, 0, settings.consecutive(), settings.clearAfter(),
                e.windowStart(), e.windowEnd(), null, null, limit, limit, null, events, why,
                new Measurement(Measurement.ODDS_RATIO, null, null));
    }
}
