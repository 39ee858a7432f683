package org.oddswatch.alerts.rules;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
import org.oddswatch.alerts.engine.AlertRulesConfig.Calibration;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.lifecycle.Evidence;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Calibration of the baseline model on each final window ({@link WindowEstimate#calibration()}).
 * {@link Zone#BEYOND} when any of these holds, checked in this order (the first decides the
 * reported value and direction):
 * <ol>
 *   <li>the O/E interval {@code [oeLower, oeUpper]} lies wholly above or wholly below the band;</li>
 *   <li>the slope's Wald interval {@code slope ± slopeZ·slopeSe} lies wholly outside the slope band;</li>
 *   <li>the Hosmer–Lemeshow p-value ({@link #externalP}: g degrees of freedom, allowing for the
 *       baseline's error) is below its limit (direction +1).</li>
 * </ol>
 * {@link Zone#INSIDE} when the O/E and slope point estimates are inside their bands and the HL
 * p-value is at least ten times its limit (figures that are absent do not block); otherwise
 * {@link Zone#BETWEEN}. Without a calibration estimate, or when the guard refuses (the guard's
 * {@code minEvents} is compared with the calibration's events), {@link Zone#UNKNOWN}.
 */
public final class CalibrationRule implements WindowRule {

    public static final String NAME = "calibration";

    private final Calibration settings;
    private final InformationGuard guard;
    private final long baselineEvents;

    /** @param baselineEvents the baseline's events, for the Hosmer–Lemeshow p-value ({@link #externalP}) */
    public CalibrationRule(Calibration settings, InformationGuard guard, long baselineEvents) {
        this.settings = settings;
        this.guard = guard;
        this.baselineEvents = baselineEvents;
    }

    @Override
    public String name() {
        return NAME;
    }

    @Override
    public List<Reading> evaluate(WindowEstimate e) {
        CalibrationEstimate c = e.calibration();
        AlertSubject subject = AlertSubject.calibration();
        double oeMin = settings.observedExpectedBand().min();
        double oeMax = settings.observedExpectedBand().max();
        if (c == null) {
            return List.of(reading(e, Zone.UNKNOWN, 0, null, null, 0, "no calibration estimate"));
        }
        String refusal = guard.refusal(e.fit(), c.events());
        if (refusal != null) {
            return List.of(reading(e, Zone.UNKNOWN, 0, c.observedExpected(), oeMax, c.events(), refusal));
        }
        double slopeMin = settings.slopeBand().min();
        double slopeMax = settings.slopeBand().max();
        Double slopeLow = c.slope() != null && c.slopeSe() != null ? c.slope() - settings.slopeZ() * c.slopeSe() : null;
        Double slopeHigh = c.slope() != null && c.slopeSe() != null ? c.slope() + settings.slopeZ() * c.slopeSe() : null;
        Double hlP = externalP(c, baselineEvents);
        List<String> beyond = new ArrayList<>();
        Figure decided = null;
        if (c.oeLower() != null && c.oeLower() > oeMax) {
            beyond.add("observed/expected interval wholly above " + Format.num(oeMax));
            decided = decided == null ? new Figure(Measurement.OBSERVED_EXPECTED, 1, c.observedExpected(), oeMax, c.oeLower(),
                    c.oeUpper(), 1.0) : decided;
        } else if (c.oeUpper() != null && c.oeUpper() < oeMin) {
            beyond.add("observed/expected interval wholly below " + Format.num(oeMin));
            decided = decided == null ? new Figure(Measurement.OBSERVED_EXPECTED, -1, c.observedExpected(), oeMin, c.oeLower(),
                    c.oeUpper(), 1.0) : decided;
        }
        if (slopeLow != null && slopeLow > slopeMax) {
            beyond.add("slope interval wholly above " + Format.num(slopeMax));
            decided = decided == null ? new Figure(Measurement.CALIBRATION_SLOPE, 1, c.slope(), slopeMax, slopeLow, slopeHigh,
                    1.0) : decided;
        } else if (slopeHigh != null && slopeHigh < slopeMin) {
            beyond.add("slope interval wholly below " + Format.num(slopeMin));
            decided = decided == null ? new Figure(Measurement.CALIBRATION_SLOPE, -1, c.slope(), slopeMin, slopeLow, slopeHigh,
                    1.0) : decided;
        }
        if (hlP != null && hlP < settings.hosmerLemeshowP()) {
            beyond.add("Hosmer-Lemeshow p below " + Format.num(settings.hosmerLemeshowP()));
            decided = decided == null
                    ? new Figure(Measurement.HOSMER_LEMESHOW_P, 1, hlP, settings.hosmerLemeshowP(), null, null, null)
                    : decided;
        }
        boolean oeInside = c.observedExpected() == null
                || (c.observedExpected() >= oeMin && c.observedExpected() <= oeMax);
        boolean slopeInside = c.slope() == null || (c.slope() >= slopeMin && c.slope() <= slopeMax);
        boolean hlInside = hlP == null || hlP >= 10 * settings.hosmerLemeshowP();
        Zone zone = decided != null ? Zone.BEYOND : oeInside && slopeInside && hlInside ? Zone.INSIDE : Zone.BETWEEN;
        String detail = "the baseline model's calibration: " + Format.count(c.observed()) + " positives observed against "
                + Format.num(c.expected()) + " expected, observed/expected " + Format.num(c.observedExpected())
                + " (interval " + Format.num(c.oeLower()) + " to " + Format.num(c.oeUpper()) + ", band "
                + Format.num(oeMin) + " to " + Format.num(oeMax) + "), calibration slope " + Format.num(c.slope())
                + " (band " + Format.num(slopeMin) + " to " + Format.num(slopeMax) + "), Hosmer-Lemeshow p "
                + Format.num(hlP) + " (" + (c.hosmerLemeshowGroups() == null ? "?" : c.hosmerLemeshowGroups())
                + " degrees of freedom)" + (beyond.isEmpty() ? "" : "; " + String.join(", ", beyond));
        if (decided == null) {
            // not beyond: the O/E and its band end on the side of its point estimate speak for the window
            Double oe = c.observedExpected();
            decided = new Figure(Measurement.OBSERVED_EXPECTED, 0, oe, oe != null && oe < 1 ? oeMin : oeMax,
                    c.oeLower(), c.oeUpper(), 1.0);
        }
        return List.of(new Reading(NAME, subject, zone, decided.direction(), settings.consecutive(),
                settings.clearAfter(), e.windowStart(), e.windowEnd(), decided.value(), decided.baseline(),
                decided.limit(), decided.clearLimit(), new Evidence(null, null, decided.lower(), decided.upper(), null),
                c.events(), detail, new Measurement(decided.measure(), decided.value(), decided.side())));
    }

    /**
     * Hosmer–Lemeshow p-value for a frozen, estimated model on new data:
     * <pre>
     *   p = P(χ²_g &gt; X / (1 + n_w / N_b))
     * </pre>
     * with X the window's statistic over g groups, n_w the window's events and N_b the baseline's.
     * <ul>
     *   <li>g degrees of freedom, not g − 2: no parameter was estimated on this window (Hosmer &amp;
     *       Lemeshow, <i>Applied Logistic Regression</i>, 2nd ed., on external validation; the g − 2 of
     *       the estimate's own p-value applies to the development sample).</li>
     *   <li>The divisor allows for the baseline's own estimation error, which the classic statistic
     *       ignores: each group's expected count carries the baseline coefficients' error, so the
     *       residual vector's covariance is {@code D + G Σ_b G'} rather than the binomial {@code D}
     *       ({@code G} the groups' sums of {@code p(1 − p)·x}, {@code Σ_b} the baseline's covariance).
     *       Relative to {@code D} its largest eigenvalue is at most {@code 1 + n_w / N_b} (grouping
     *       keeps at most the window's information {@code I_w}, and {@code Σ_b ≈ I_w⁻¹ · n_w / N_b}
     *       when the window's events resemble the baseline's), so {@code X / (1 + n_w / N_b)} is
     *       stochastically no larger than χ²_g in control and the p-value stays at or above its
     *       nominal level. Without the divisor, 28-day windows against a 12-week baseline raised
     *       about 17 times the false alarms the limit stands for (the detection benchmark's sixteen
     *       districts).</li>
     * </ul>
     * Falls back to the estimate's p-value when the statistic or the group count is missing, and to
     * no divisor when {@code baselineEvents} is not positive.
     */
    static Double externalP(CalibrationEstimate c, long baselineEvents) {
        if (c.hosmerLemeshow() == null || c.hosmerLemeshowGroups() == null || c.hosmerLemeshowGroups() < 1
                || !Double.isFinite(c.hosmerLemeshow())) {
            return c.hosmerLemeshowP();
        }
        double inflation = baselineEvents > 0 ? 1 + (double) c.events() / baselineEvents : 1;
        return 1.0 - new ChiSquaredDistribution(null, c.hosmerLemeshowGroups())
                .cumulativeProbability(c.hosmerLemeshow() / inflation);
    }

    /**
     * The figure that decided a reading: its measure, value, the limit it crossed, its interval and
     * baseline value. Direction +1 is the side of worse calibration above the band; the
     * Hosmer–Lemeshow p-value lies below its limit but keeps direction +1 (a lack of fit has no sign),
     * so a run of HL and O/E-above windows counts as one run.
     */
    private record Figure(String measure, int direction, Double value, Double limit, Double lower, Double upper,
                          Double baseline) {

        /** The value back inside which the figure counts towards clearing: the band end, or ten times the HL limit. */
        Double clearLimit() {
            return Measurement.HOSMER_LEMESHOW_P.equals(measure) && limit != null ? 10 * limit : limit;
        }

        Measurement.Side side() {
            if (direction == 0) {
                return null;
            }
            if (Measurement.HOSMER_LEMESHOW_P.equals(measure)) {
                return Measurement.Side.BELOW;
            }
            return direction > 0 ? Measurement.Side.ABOVE : Measurement.Side.BELOW;
        }
    }

    private Reading reading(WindowEstimate e, Zone zone, int direction, Double observed, Double limit, long events,
                            String detail) {
        return new Reading(NAME, AlertSubject.calibration(), zone, direction, settings.consecutive(),
                settings.clearAfter(), e.windowStart(), e.windowEnd(), observed, 1.0, limit, limit, null, events, detail,
                new Measurement(Measurement.OBSERVED_EXPECTED, observed, null));
    }
}
