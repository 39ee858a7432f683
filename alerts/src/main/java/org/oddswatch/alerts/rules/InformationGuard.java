package org.oddswatch.alerts.rules;

import org.oddswatch.alerts.engine.AlertRulesConfig.Guard;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;
import org.oddswatch.estimator.result.FitSummary;

/**
 * The minimum-information guard: a window may feed a rule only when its fit is usable and rests on
 * enough events. Usable means {@code fit.state} is {@code converged}; or {@code separation} with
 * {@code fit.method = firth} when Firth fits are accepted; or a state the definition explicitly
 * allows.
 */
public final class InformationGuard {

    private final Guard guard;

    public InformationGuard(Guard guard) {
        this.guard = guard;
    }

    public long minEvents() {
        return guard.minEvents();
    }

    /** Why the window is refused, or null when it may be used. */
    public String refusal(FitSummary fit, long events) {
        if (fit == null) {
            return "no model fit";
        }
        if (!fitted(fit)) {
            return "fit state " + fit.state();
        }
        if (events < guard.minEvents()) {
            return events + " events, fewer than the minimum " + guard.minEvents();
        }
        return null;
    }

    /**
     * The code of {@link #refusal}: {@link GapReason#NO_FIT} (no fit, or {@code no-model}),
     * {@link GapReason#TOO_FEW_EVENTS} (state {@code too-few-events}, or fewer events than the
     * guard's minimum), else {@link GapReason#FIT_UNUSABLE}; null when the window may be used.
     */
    public GapReason refusalReason(FitSummary fit, long events) {
        if (fit == null) {
            return GapReason.NO_FIT;
        }
        if (!fitted(fit)) {
            return fit.state() == FitState.NO_MODEL ? GapReason.NO_FIT
                    : fit.state() == FitState.TOO_FEW_EVENTS ? GapReason.TOO_FEW_EVENTS : GapReason.FIT_UNUSABLE;
        }
        return events < guard.minEvents() ? GapReason.TOO_FEW_EVENTS : null;
    }

    private boolean fitted(FitSummary fit) {
        if (fit.state() == FitState.CONVERGED) {
            return true;
        }
        if (guard.acceptFirth() && fit.method() == FitMethod.FIRTH && fit.state() == FitState.SEPARATION) {
            return true;
        }
        return fit.state() != null && guard.allowStates().contains(fit.state().toString());
    }
}
