package org.oddswatch.alerts.engine;

import com.fasterxml.jackson.annotation.JsonCreator;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import org.oddswatch.alerts.gaps.GapReason;
import org.oddswatch.alerts.rules.CalibrationRule;
import org.oddswatch.alerts.rules.OddsRatioBoundsRule;
import org.oddswatch.alerts.rules.OddsRatioCusumRule;
import org.oddswatch.alerts.rules.OddsRatioDriftRule;
import org.oddswatch.estimator.fit.FitState;

/**
 * Rule settings of one monitor, bound by Jackson from the {@code rules} mapping of a monitor
 * definition. A null section means that rule is off; inside a present section an omitted field
 * takes the default documented here and in {@code alerts/README.md}. (The definition reader gives
 * every rule that has defaults an empty section unless the definition switches it off with
 * {@code enabled: false}; see {@link #switches()} for what runs.) Invalid values raise an
 * {@link IllegalArgumentException} naming the key (Jackson wraps it with the location).
 *
 * @param guard the minimum-information guard shared by all rules (a rule's own {@code guard} wins)
 * @param oddsRatioDrift z-test of each watched coefficient against the baseline
 * @param oddsRatioBounds interval of a watched odds ratio wholly beyond fixed bounds
 * @param calibration observed/expected, calibration slope and Hosmer–Lemeshow of the baseline model
 * @param cusum risk-adjusted Bernoulli CUSUM of each event against the baseline model
 * @param oddsRatioCusum two-sided CUSUM of each step's score statistic for each watched coefficient
 * @param falseAlarmsPerYear the false alarms a year the monitor tolerates across all its streams and
 *     rules (default 1); {@link FalseAlarmBudget} derives every limit the definition leaves out from it
 * @param budgetConfidence the probability with which each derived limit keeps its share of the budget
 *     despite the baseline's estimation error (default {@value #DEFAULT_BUDGET_CONFIDENCE}; Gandy &amp;
 *     Kvaløy 2013)
 */
public record AlertRulesConfig(Guard guard, OddsRatioDrift oddsRatioDrift, OddsRatioBounds oddsRatioBounds,
                               Calibration calibration, Cusum cusum, OddsRatioCusum oddsRatioCusum,
                               Double falseAlarmsPerYear, Double budgetConfidence) {

    /**
     * The default {@code budgetConfidence}: 0.99. A tolerated number of false alarms is a promise about
     * the baseline a stream actually has, not only an average over baselines; at 0.99 the detection
     * benchmark's house scenario, with the default budget of 1 a year, raises about a quarter of it
     * (0.9 raised about half) while an odds-ratio doubling is still found within two weekly windows in
     * over 90 % of runs (see BENCHMARKS.md, "Detection quality"). Lower it to detect faster at the
     * cost of more false alarms.
     */
    public static final double DEFAULT_BUDGET_CONFIDENCE = 0.99;

    public AlertRulesConfig {
        guard = guard == null ? new Guard(null, null, null) : guard;
        falseAlarmsPerYear = falseAlarmsPerYear == null ? 1.0 : falseAlarmsPerYear;
        budgetConfidence = budgetConfidence == null ? DEFAULT_BUDGET_CONFIDENCE : budgetConfidence;
        requirePositive("falseAlarmsPerYear", falseAlarmsPerYear);
        if (!(budgetConfidence >= 0.5 && budgetConfidence < 1)) {
            throw new IllegalArgumentException("budgetConfidence must be in [0.5, 1), got " + budgetConfidence);
        }
    }

    /** The rules without the step-score CUSUM, with the default budget (the settings of earlier versions). */
    public AlertRulesConfig(Guard guard, OddsRatioDrift oddsRatioDrift, OddsRatioBounds oddsRatioBounds,
                            Calibration calibration, Cusum cusum) {
        this(guard, oddsRatioDrift, oddsRatioBounds, calibration, cusum, null, null, null);
    }

    /**
     * What a monitor gets when its definition has no {@code rules} mapping: the step-score CUSUM on
     * every watched term, calibration and the Bernoulli CUSUM with their defaults, all limits from
     * the false-alarm budget. The window z-rule ({@code oddsRatioDrift}) runs only when configured:
     * the step CUSUM finds an odds-ratio doubling as fast without it (detection harness), and its
     * union-bound charge would take budget from the charts that find changes. Bounds need explicit
     * limits and stay off.
     */
    public static AlertRulesConfig defaults() {
        return new AlertRulesConfig(null, null, null,
                new Calibration(null, null, null, null, null, null, null), new Cusum(null, null, null, null, null, null, null),
                new OddsRatioCusum(null, null, null, null, null, null, null), null, null);
    }

    /** The CUSUM's name as one rule (its charts raise {@code bernoulli-cusum-up} and {@code -down}). */
    public static final String CUSUM = "bernoulli-cusum";

    /**
     * Whether one rule runs, and why not.
     *
     * @param rule the rule name ({@code odds-ratio-drift}, {@code odds-ratio-bounds}, {@code calibration},
     *     {@code bernoulli-cusum})
     * @param on whether the definition switches it on
     * @param needsBaseline whether it compares with a baseline (and so runs only on a stream that has one)
     * @param offReason why it is off, or null when on
     * @param offDetail the same in words, or null when on
     */
    public record RuleSwitch(String rule, boolean on, boolean needsBaseline, GapReason offReason, String offDetail) {

        /** {@code odds-ratio-drift: on (needs a baseline)} or {@code cusum: off [switched-off]: ...}. */
        public String describe() {
            return rule + (on ? ": on" + (needsBaseline ? " (needs a baseline)" : "")
                    : ": off [" + offReason.code() + "]: " + offDetail);
        }
    }

    /** Every rule, in a fixed order, with whether it is on. */
    public List<RuleSwitch> switches() {
        List<RuleSwitch> list = new ArrayList<>(4);
        // off by default: the window z-rule runs only where the definition lists it
        list.add(oddsRatioDrift != null ? new RuleSwitch(OddsRatioDriftRule.NAME, true, true, null, null)
                : new RuleSwitch(OddsRatioDriftRule.NAME, false, true, GapReason.NOT_CONFIGURED,
                        "it runs only where the definition lists it (rules.oddsRatioDrift); the step CUSUM watches the"
                                + " odds ratios by default"));
        list.add(oddsRatioBounds != null ? new RuleSwitch(OddsRatioBoundsRule.NAME, true, false, null, null)
                : new RuleSwitch(OddsRatioBoundsRule.NAME, false, false, GapReason.NOT_CONFIGURED,
                        "it runs only on bounds the definition gives (oddsRatioBounds.terms)"));
        list.add(toggle(CalibrationRule.NAME, calibration != null, true, "calibration"));
        list.add(toggle(CUSUM, cusum != null, true, "cusum"));
        return list;
    }

    /**
     * {@link #switches()} and the step-score CUSUM's switch ({@code check} lists them all). The step
     * CUSUM is kept out of {@link #switches()}, which the monitoring-gap lists are built from: a
     * stream without a baseline already shows that nothing compared with a baseline runs, and the
     * windows it does not judge are listed under its own name.
     */
    public List<RuleSwitch> allSwitches() {
        List<RuleSwitch> list = new ArrayList<>(switches());
        list.add(toggle(OddsRatioCusumRule.NAME, oddsRatioCusum != null, true, "oddsRatioCusum"));
        return list;
    }

    private static RuleSwitch toggle(String rule, boolean on, boolean needsBaseline, String key) {
        return on ? new RuleSwitch(rule, true, needsBaseline, null, null)
                : new RuleSwitch(rule, false, needsBaseline, GapReason.SWITCHED_OFF,
                        "switched off in the definition (rules." + key + ".enabled: false)");
    }

    /** The guard a rule uses: its own, else the shared one. */
    public Guard guardFor(Guard own) {
        return own != null ? own : guard;
    }

    /**
     * Minimum-information guard: no window alert from a window whose fit is not usable.
     *
     * @param allowStates extra {@code fit.state} labels accepted besides {@code converged}
     *     (for instance {@code too-few-events}); default none
     * @param acceptFirth whether a Firth fit (state {@code separation}, method {@code firth}) counts
     *     as fitted; default true
     * @param minEvents minimum complete-case events in the window ({@code fit.events}, or the
     *     calibration's events); for the CUSUM, events processed before it may signal; default 100
     */
    public record Guard(List<String> allowStates, Boolean acceptFirth, Long minEvents) {
        public Guard {
            allowStates = allowStates == null ? List.of() : List.copyOf(allowStates);
            for (String state : allowStates) {
                boolean known = false;
                for (FitState s : FitState.values()) {
                    known |= s.toString().equals(state);
                }
                if (!known) {
                    throw new IllegalArgumentException("guard.allowStates: unknown fit state '" + state + "'");
                }
            }
            acceptFirth = acceptFirth == null ? Boolean.TRUE : acceptFirth;
            minEvents = minEvents == null ? 100L : minEvents;
            requireAtLeast("guard.minEvents", minEvents, 0);
        }
    }

    /**
     * A watched term (and optionally one level) with optional per-term overrides of its section's
     * limits. In YAML either a mapping or just the term name.
     */
    public record TermLimits(String term, String level, Double limit, Double clearLimit, Integer consecutive,
                             Integer clearAfter) {
        public TermLimits {
            Objects.requireNonNull(term, "terms[].term is required");
        }

        @JsonCreator(mode = JsonCreator.Mode.DELEGATING)
        public static TermLimits of(String term) {
            return new TermLimits(term, null, null, null, null, null);
        }

        /** Whether this entry selects the column {@code term}/{@code level} (null level: every level). */
        public boolean selects(String columnTerm, String columnLevel) {
            return term.equals(columnTerm) && (level == null || level.equals(columnLevel));
        }
    }

    /**
     * Odds-ratio drift: {@code z = (b_now - b_base) / sqrt(se_now^2 + se_base^2)}.
     *
     * @param limit raise when {@code |z| >= limit} (default 3.0)
     * @param clearLimit a window counts towards clearing when {@code |z| < clearLimit} (default 2.0)
     * @param consecutive final windows beyond the limit, in a row and in the same direction, to raise (default 1)
     * @param clearAfter windows in a row inside the clear limit to clear (default 2)
     * @param terms which watched terms, with optional overrides; default every watched column of the baseline
     * @param guard this rule's own guard, else the shared one
     */
    public record OddsRatioDrift(Double limit, Double clearLimit, Integer consecutive, Integer clearAfter,
                                 List<TermLimits> terms, Guard guard) {
        public OddsRatioDrift {
            limit = limit == null ? 3.0 : limit;
            clearLimit = clearLimit == null ? Math.min(2.0, limit) : clearLimit;
            consecutive = consecutive == null ? 1 : consecutive;
            clearAfter = clearAfter == null ? 2 : clearAfter;
            terms = terms == null ? List.of() : List.copyOf(terms);
            requirePositive("oddsRatioDrift.limit", limit);
            if (!(clearLimit > 0 && clearLimit <= limit)) {
                throw new IllegalArgumentException("oddsRatioDrift.clearLimit must be in (0, limit]");
            }
            requireAtLeast("oddsRatioDrift.consecutive", consecutive, 1);
            requireAtLeast("oddsRatioDrift.clearAfter", clearAfter, 1);
        }
    }

    /**
     * One watched odds ratio's fixed bounds.
     *
     * @param above raise when the whole interval lies above this odds ratio (optional)
     * @param below raise when the whole interval lies below this odds ratio (optional)
     */
    public record TermBounds(String term, String level, Double above, Double below) {
        public TermBounds {
            Objects.requireNonNull(term, "oddsRatioBounds.terms[].term is required");
            if (above == null && below == null) {
                throw new IllegalArgumentException("oddsRatioBounds.terms[" + term + "]: set above, below or both");
            }
            if (above != null) {
                requirePositive("oddsRatioBounds.terms[" + term + "].above", above);
            }
            if (below != null) {
                requirePositive("oddsRatioBounds.terms[" + term + "].below", below);
            }
            if (above != null && below != null && below > above) {
                throw new IllegalArgumentException("oddsRatioBounds.terms[" + term + "]: below must not exceed above");
            }
        }
    }

    /**
     * Odds-ratio bounds: the watched odds ratio's interval lies wholly above {@code above} or wholly
     * below {@code below}; it counts towards clearing once the point estimate is back within the
     * bounds.
     *
     * @param terms the bounded terms (required, at least one)
     * @param consecutive windows in a row beyond a bound to raise (default 1)
     * @param clearAfter windows in a row back within the bounds to clear (default 2)
     */
    public record OddsRatioBounds(List<TermBounds> terms, Integer consecutive, Integer clearAfter, Guard guard) {
        public OddsRatioBounds {
            if (terms == null || terms.isEmpty()) {
                throw new IllegalArgumentException("oddsRatioBounds.terms: at least one bounded term is required");
            }
            terms = List.copyOf(terms);
            consecutive = consecutive == null ? 1 : consecutive;
            clearAfter = clearAfter == null ? 2 : clearAfter;
            requireAtLeast("oddsRatioBounds.consecutive", consecutive, 1);
            requireAtLeast("oddsRatioBounds.clearAfter", clearAfter, 1);
        }
    }

    /**
     * A band {@code [min, max]} of a calibration figure. An end left out is derived from the
     * false-alarm budget where the stream has a baseline ({@link FalseAlarmBudget}), else it takes the
     * section's fallback default; an end that is given always wins.
     */
    public record Band(Double min, Double max) {
        Band withDefaults(double defaultMin, double defaultMax, String key) {
            double lo = min == null ? defaultMin : min;
            double hi = max == null ? defaultMax : max;
            if (!(lo < hi)) {
                throw new IllegalArgumentException(key + ": min must be below max");
            }
            return new Band(lo, hi);
        }

        /** Whether both ends are given. */
        public boolean complete() {
            return min != null && max != null;
        }
    }

    /**
     * Calibration of the baseline model on each final window. Raised when any figure is clearly
     * outside its band: the O/E interval wholly outside {@code observedExpected}; the slope's Wald
     * interval ({@code slope ± slopeZ·se}) wholly outside {@code slope} (slopeZ default 1.96); the
     * Hosmer–Lemeshow p-value (g degrees of freedom, allowing for the baseline's own estimation error,
     * see {@code CalibrationRule.externalP}) below {@code hosmerLemeshowP} (default 0.0001, charged to
     * the false-alarm budget at that level per window step). Band ends the definition leaves out are derived per
     * stream from the false-alarm budget ({@link FalseAlarmBudget}, {@code CalibrationFalseAlarms});
     * where no budget can derive them (no baseline period or no expected positives) they take the
     * fallback defaults O/E [0.8, 1.25] and slope [0.7, 1.3] ({@link #observedExpectedBand()},
     * {@link #slopeBand()}). The components keep what the definition wrote, so explicit ends are told
     * from defaults. A window counts towards clearing when the O/E and slope point estimates are
     * inside their bands and the HL p-value is at least ten times its limit.
     */
    public record Calibration(Band observedExpected, Band slope, Double slopeZ, Double hosmerLemeshowP,
                              Integer consecutive, Integer clearAfter, Guard guard) {
        public Calibration {
            observedExpected = observedExpected == null ? new Band(null, null) : observedExpected;
            slope = slope == null ? new Band(null, null) : slope;
            observedExpected.withDefaults(OE_FALLBACK_MIN, OE_FALLBACK_MAX, "calibration.observedExpected");
            slope.withDefaults(SLOPE_FALLBACK_MIN, SLOPE_FALLBACK_MAX, "calibration.slope");
            slopeZ = slopeZ == null ? 1.96 : slopeZ;
            hosmerLemeshowP = hosmerLemeshowP == null ? 0.0001 : hosmerLemeshowP;
            consecutive = consecutive == null ? 1 : consecutive;
            clearAfter = clearAfter == null ? 2 : clearAfter;
            requirePositive("calibration.slopeZ", slopeZ);
            if (!(hosmerLemeshowP >= 0 && hosmerLemeshowP < 0.1)) {
                throw new IllegalArgumentException("calibration.hosmerLemeshowP must be in [0, 0.1)");
            }
            requireAtLeast("calibration.consecutive", consecutive, 1);
            requireAtLeast("calibration.clearAfter", clearAfter, 1);
        }

        /** The O/E band the rule uses: the ends given (or derived and set), else the fallback [0.8, 1.25]. */
        public Band observedExpectedBand() {
            return observedExpected.withDefaults(OE_FALLBACK_MIN, OE_FALLBACK_MAX, "calibration.observedExpected");
        }

        /** The slope band the rule uses: the ends given (or derived and set), else the fallback [0.7, 1.3]. */
        public Band slopeBand() {
            return slope.withDefaults(SLOPE_FALLBACK_MIN, SLOPE_FALLBACK_MAX, "calibration.slope");
        }

        /** Whether any band end is left to the false-alarm budget. */
        public boolean bandsLeftOut() {
            return !observedExpected.complete() || !slope.complete();
        }

        /** The same settings with both bands complete: the given ends kept, the left-out ones set. */
        public Calibration withBands(Band oe, Band slopeBand) {
            return new Calibration(new Band(observedExpected.min() != null ? observedExpected.min() : oe.min(),
                    observedExpected.max() != null ? observedExpected.max() : oe.max()),
                    new Band(slope.min() != null ? slope.min() : slopeBand.min(),
                            slope.max() != null ? slope.max() : slopeBand.max()),
                    slopeZ, hosmerLemeshowP, consecutive, clearAfter, guard);
        }
    }

    /** Fallback calibration bands, used where the budget cannot derive them. */
    public static final double OE_FALLBACK_MIN = 0.8;
    public static final double OE_FALLBACK_MAX = 1.25;
    public static final double SLOPE_FALLBACK_MIN = 0.7;
    public static final double SLOPE_FALLBACK_MAX = 1.3;

    /**
     * Risk-adjusted Bernoulli CUSUM (Steiner et al. 2000) against the baseline model.
     *
     * @param up odds multiplier the upper chart is tuned to detect, &gt; 1 (default
     *     {@link #DEFAULT_UP}, 1.5)
     * @param down odds multiplier of the lower chart, &lt; 1 (default 1/1.5)
     * @param limit decision limit h of both charts (default: derived from the false-alarm budget, see
     *     {@link FalseAlarmBudget}; 8.0 where it cannot be derived)
     * @param clearAfter final windows in a row without a signal, each closing with the chart below
     *     {@code clearFraction · limit}, to clear an open episode (default 2)
     * @param clearFraction the clear limit as a share of h, in (0, 1) (default 0.5)
     * @param terms watched terms that get their own pair of charts over the events with that
     *     indicator set (default none: only the overall pair)
     * @param guard {@code minEvents}: events a chart must have processed before it may signal
     */
    public record Cusum(Double up, Double down, Double limit, Integer clearAfter, Double clearFraction,
                        List<TermLimits> terms, Guard guard) {
        public Cusum {
            up = up == null ? DEFAULT_UP : up;
            down = down == null ? 1.0 / DEFAULT_UP : down;
            clearAfter = clearAfter == null ? 2 : clearAfter;
            clearFraction = clearFraction == null ? 0.5 : clearFraction;
            terms = terms == null ? List.of() : List.copyOf(terms);
            if (!(up > 1) || Double.isInfinite(up)) {
                throw new IllegalArgumentException("cusum.up must be a finite odds multiplier above 1");
            }
            if (!(down > 0 && down < 1)) {
                throw new IllegalArgumentException("cusum.down must be an odds multiplier in (0, 1)");
            }
            if (limit != null) {
                requirePositive("cusum.limit", limit);
            }
            requireAtLeast("cusum.clearAfter", clearAfter, 1);
            if (!(clearFraction > 0 && clearFraction < 1)) {
                throw new IllegalArgumentException("cusum.clearFraction must be in (0, 1), got " + clearFraction);
            }
        }
    }

    /**
     * The default odds multiplier of the Bernoulli CUSUM's upper chart (the lower one's is its
     * inverse). For a known baseline a chart tuned to the shift itself is fastest for that shift at a
     * given in-control run length (Moustakides 1986, <i>Annals of Statistics</i> 14:1379), which would
     * suggest 1.3 for a 30 % prevalence rise at 5 %. With the limit the false-alarm budget derives,
     * solved at the baseline's error quantile (true odds about 1.05 times the baseline's in control at
     * the house load), a chart tuned close to 1 pays more in limit than it gains: at the house load 1.5
     * gives the shorter computed run length after that rise (about 4,600 events against 4,900 for 1.3),
     * and the detection harness found no clear gain with 1.3 (alerts README).
     */
    public static final double DEFAULT_UP = 1.5;

    /** The limit used where the budget cannot derive one (no baseline event rate): the earlier fixed default. */
    public static final double CUSUM_FALLBACK_LIMIT = 8.0;

    /**
     * The {@code cusum} section with its limit in place: the given one, else {@code derived}.
     */
    public static Cusum withLimit(Cusum c, double derived) {
        return c.limit() != null ? c : new Cusum(c.up(), c.down(), derived, c.clearAfter(), c.clearFraction(),
                c.terms(), c.guard());
    }

    /**
     * Two-sided CUSUM of the score statistic of each watched coefficient on each step's new events
     * ({@code OddsRatioCusumRule}).
     *
     * @param designOddsRatio the change of the watched odds ratio the chart is tuned to, as a factor
     *     (default 2; 1/2 is the same design): k is half of {@code |ln designOddsRatio|} in a step's
     *     standard errors, as the baseline predicts them
     * @param reference k itself, in standard-error units (overrides {@code designOddsRatio})
     * @param limit decision limit h (default: derived from the false-alarm budget); a term entry's
     *     {@code limit} wins for that term
     * @param clearAfter final windows in a row without a signal, both sides below
     *     {@code clearFraction · h}, to clear (default 2)
     * @param clearFraction the clear limit as a share of h, in (0, 1) (default 0.5)
     * @param terms which watched terms (default every watched column of the baseline)
     * @param guard {@code minEvents}: new events a step needs to be judged
     */
    public record OddsRatioCusum(Double designOddsRatio, Double reference, Double limit, Integer clearAfter,
                                 Double clearFraction, List<TermLimits> terms, Guard guard) {
        public OddsRatioCusum {
            designOddsRatio = designOddsRatio == null ? 2.0 : designOddsRatio;
            clearAfter = clearAfter == null ? 2 : clearAfter;
            clearFraction = clearFraction == null ? 0.5 : clearFraction;
            terms = terms == null ? List.of() : List.copyOf(terms);
            requirePositive("oddsRatioCusum.designOddsRatio", designOddsRatio);
            if (designOddsRatio == 1.0) {
                throw new IllegalArgumentException("oddsRatioCusum.designOddsRatio must differ from 1");
            }
            if (reference != null && !(reference >= 0 && reference < 10)) {
                throw new IllegalArgumentException("oddsRatioCusum.reference must be in [0, 10), got " + reference);
            }
            if (limit != null) {
                requirePositive("oddsRatioCusum.limit", limit);
            }
            requireAtLeast("oddsRatioCusum.clearAfter", clearAfter, 1);
            if (!(clearFraction > 0 && clearFraction < 1)) {
                throw new IllegalArgumentException("oddsRatioCusum.clearFraction must be in (0, 1), got " + clearFraction);
            }
        }
    }

    private static void requirePositive(String key, double value) {
        if (!(value > 0) || Double.isInfinite(value)) {
            throw new IllegalArgumentException(key + " must be a positive finite number, got " + value);
        }
    }

    private static void requireAtLeast(String key, long value, long min) {
        if (value < min) {
            throw new IllegalArgumentException(key + " must be at least " + min + ", got " + value);
        }
    }
}
