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
 */
public record WindowEstimate(String stream, Instant windowStart, Instant windowEnd, WindowStatus status, long events,
                             long cases, PrevalenceEstimate prevalence, List<StratumPrevalence> strata, FitSummary fit,
                             List<CoefficientEstimate> coefficients, CalibrationEstimate calibration,
                             List<String> notes) {

    public WindowEstimate {
        strata = strata == null ? List.of() : List.copyOf(strata);
        coefficients = coefficients == null ? List.of() : List.copyOf(coefficients);
        notes = notes == null ? List.of() : List.copyOf(notes);
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
