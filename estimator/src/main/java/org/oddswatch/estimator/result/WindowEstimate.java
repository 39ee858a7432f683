package org.oddswatch.estimator.result;

import java.time.Instant;
import java.util.List;

/**
 * Everything estimated for one stream and one window: the record behind the window-estimate JSON.
 * Component names are the JSON field names; enums print their JSON labels via {@code toString()}.
 *
 * @param events all accepted events in the window (complete or not)
 * @param cases positives among them
 * @param strata prevalence by level of the stratifying term, or an empty list
 * @param calibration calibration of the baseline model, or null without a baseline
 * @param notes plain-language notes on special cases (zero cells, separation, clipping, ...)
 * @param drift the drift statistic of each watched coefficient in a final window, where the alert
 *     rules computed one; null (left out of the JSON) otherwise
 * @param cusum the CUSUM charts' values at the end of a final window, where a CUSUM rule runs; null
 *     (left out of the JSON) otherwise
 * @param stepCusum the odds-ratio step CUSUM of each watched coefficient at the end of a final window,
 *     where that rule runs; null (left out of the JSON) otherwise
 */
public record WindowEstimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status, long events,
                             long cases, PrevalenceEstimate prevalence, List<StratumPrevalence> strata, FitSummary fit,
                             List<CoefficientEstimate> coefficients, CalibrationEstimate calibration,
                             List<String> notes, List<DriftValue> drift, List<CusumValue> cusum,
                             List<StepCusumValue> stepCusum) {

    public WindowEstimate {
        strata = strata == null ? List.of() : List.copyOf(strata);
        coefficients = coefficients == null ? List.of() : List.copyOf(coefficients);
        notes = notes == null ? List.of() : List.copyOf(notes);
        drift = drift == null || drift.isEmpty() ? null : List.copyOf(drift);
        cusum = cusum == null || cusum.isEmpty() ? null : List.copyOf(cusum);
        stepCusum = stepCusum == null || stepCusum.isEmpty() ? null : List.copyOf(stepCusum);
    }

    /** An estimate with drift and Bernoulli CUSUM values but no step CUSUM. */
    public WindowEstimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status, long events,
                          long cases, PrevalenceEstimate prevalence, List<StratumPrevalence> strata, FitSummary fit,
                          List<CoefficientEstimate> coefficients, CalibrationEstimate calibration, List<String> notes,
                          List<DriftValue> drift, List<CusumValue> cusum) {
        this(stream, windowStart, windowEnd, status, events, cases, prevalence, strata, fit, coefficients, calibration,
                notes, drift, cusum, null);
    }

    /** An estimate without chart values (what the estimator itself gives). */
    public WindowEstimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status, long events,
                          long cases, PrevalenceEstimate prevalence, List<StratumPrevalence> strata, FitSummary fit,
                          List<CoefficientEstimate> coefficients, CalibrationEstimate calibration, List<String> notes) {
        this(stream, windowStart, windowEnd, status, events, cases, prevalence, strata, fit, coefficients, calibration,
                notes, null, null, null);
    }

    /** This estimate with the given chart values and no step CUSUM (an empty or null list leaves that field out). */
    public WindowEstimate withCharts(List<DriftValue> driftValues, List<CusumValue> cusumValues) {
        return withCharts(driftValues, cusumValues, null);
    }

    /** This estimate with the given chart values (an empty or null list leaves that field out). */
    public WindowEstimate withCharts(List<DriftValue> driftValues, List<CusumValue> cusumValues,
                                     List<StepCusumValue> stepCusumValues) {
        return new WindowEstimate(stream, windowStart, windowEnd, status, events, cases, prevalence, strata, fit,
                coefficients, calibration, notes, driftValues, cusumValues, stepCusumValues);
    }

    /**
     * This estimate with its chart values ({@code drift}, {@code cusum}, {@code stepCusum}) and counts
     * only, the figures left out: what a restart keeps of many published estimates to continue its
     * charts from.
     */
    public WindowEstimate chartsOnly() {
        return new WindowEstimate(stream, windowStart, windowEnd, status, events, cases, null, null, null, null, null,
                null, drift, cusum, stepCusum);
    }

    /** The coefficient of {@code term} (and {@code level}, which may be null), or null. */
    public CoefficientEstimate coefficient(String term, String level) {
        for (CoefficientEstimate c : coefficients) {
            if (c.term().equals(term) && java.util.Objects.equals(c.level(), level)) {
                return c;
            }
        }
        return null;
    }
}
