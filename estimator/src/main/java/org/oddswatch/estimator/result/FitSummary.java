package org.oddswatch.estimator.result;

import java.util.List;
import org.oddswatch.estimator.fit.FitMethod;
import org.oddswatch.estimator.fit.FitState;

/**
 * What the model fit did.
 *
 * @param events complete-case events the model used
 * @param iterations Newton iterations of the accepted fit (0 when no model was fitted)
 * @param warmStart whether the accepted fit started from the previous window's coefficients
 * @param logLikelihood maximised log-likelihood (for Firth: the unpenalised log-likelihood at the estimate), or null
 * @param nullLogLikelihood intercept-only log-likelihood, or null
 * @param dropped labels of aliased columns that were dropped ({@code term} or {@code term=level})
 */
public record FitSummary(FitState state, FitMethod method, long events, int iterations, boolean warmStart,
                         Double logLikelihood, Double nullLogLikelihood, List<String> dropped) {
}
