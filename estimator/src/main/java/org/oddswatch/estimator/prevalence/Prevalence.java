package org.oddswatch.estimator.prevalence;

import java.util.ArrayList;
import java.util.List;
import java.util.function.Consumer;
import org.oddswatch.estimator.EstimatorOptions;
import org.oddswatch.estimator.result.AdjustedPrevalence;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.StratumPrevalence;

/**
 * Builds the prevalence parts of a window estimate from counts, as the {@link EstimatorOptions} say:
 * the interval method ({@code prevalenceInterval}), the level, and optional Rogan–Gladen adjustment
 * (when both {@code sensitivity} and {@code specificity} are set).
 *
 * <p>Special cases: no events gives value and bounds null (with a note); 0 cases or all cases give
 * a proper one-sided-at-the-boundary interval (lower 0 or upper 1); a clipped Rogan–Gladen estimate
 * gives a note. Strata with no events get null value and bounds, without a note per stratum.
 */
public final class Prevalence {

    private Prevalence() {
    }

    /** {@link #of(long, long, EstimatorOptions, Consumer)} discarding the notes. */
    public static PrevalenceEstimate of(long events, long cases, EstimatorOptions options) {
        return of(events, cases, options, note -> { });
    }

    /**
     * The overall prevalence {@code cases / events} with its interval and, when test accuracy is
     * configured, its Rogan–Gladen adjustment.
     *
     * @param notes receives plain-language notes on special cases (empty window, clipping)
     * @throws IllegalArgumentException for an unknown method label, a level outside (0, 1), counts
     *     that are not {@code 0 <= cases <= events}, only one of sensitivity and specificity set, or
     *     sensitivity + specificity &lt;= 1
     */
    public static PrevalenceEstimate of(long events, long cases, EstimatorOptions options, Consumer<String> notes) {
        BinomialIntervalMethod method = BinomialIntervalMethod.fromLabel(options.prevalenceInterval());
        BinomialInterval interval = BinomialInterval.of(method, cases, events, options.level());
        if (!interval.isDefined()) {
            notes.accept("no events in the window: prevalence cannot be estimated");
        }
        AdjustedPrevalence adjusted = adjusted(interval, options, notes);
        return new PrevalenceEstimate(interval.estimate(), interval.lower(), interval.upper(), method.label(),
                adjusted);
    }

    /**
     * Prevalence per level of the stratifying term, in the order of {@code levels}. Stratum records
     * carry no adjusted value; apply {@link RoganGladen} to a stratum's interval if needed.
     *
     * @param stratumEvents events per level, same length as {@code levels}
     * @param stratumCases positives per level
     */
    public static List<StratumPrevalence> strata(String term, List<String> levels, long[] stratumEvents,
                                                 long[] stratumCases, EstimatorOptions options) {
        if (levels.size() != stratumEvents.length || levels.size() != stratumCases.length) {
            throw new IllegalArgumentException("term " + term + ": " + levels.size() + " levels but "
                    + stratumEvents.length + " event counts and " + stratumCases.length + " case counts");
        }
        BinomialIntervalMethod method = BinomialIntervalMethod.fromLabel(options.prevalenceInterval());
        List<StratumPrevalence> strata = new ArrayList<>(levels.size());
        for (int i = 0; i < levels.size(); i++) {
            BinomialInterval interval = BinomialInterval.of(method, stratumCases[i], stratumEvents[i],
                    options.level());
            strata.add(new StratumPrevalence(term, levels.get(i), stratumEvents[i], stratumCases[i],
                    interval.estimate(), interval.lower(), interval.upper()));
        }
        return List.copyOf(strata);
    }

    private static AdjustedPrevalence adjusted(BinomialInterval interval, EstimatorOptions options,
                                               Consumer<String> notes) {
        Double se = options.sensitivity();
        Double sp = options.specificity();
        if (se == null && sp == null) {
            return null;
        }
        if (se == null || sp == null) {
            throw new IllegalArgumentException("Rogan-Gladen adjustment needs both sensitivity and specificity; "
                    + "got sensitivity " + se + " and specificity " + sp);
        }
        return RoganGladen.adjust(interval, se, sp, notes);
    }
}
