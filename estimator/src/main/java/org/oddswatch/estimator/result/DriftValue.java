package org.oddswatch.estimator.result;

/**
 * The drift statistic of one watched coefficient in one final window, as the drift rule computed
 * it: {@code z = (b_now - b_base) / sqrt(se_now^2 + se_base^2)}. Present only where the rule could
 * compute it (the window passed the rule's guard and the coefficient has a standard error).
 *
 * @param rule the rule that computed it ({@code odds-ratio-drift})
 */
public record DriftValue(String rule, ChartSubject subject, double z) {
}
