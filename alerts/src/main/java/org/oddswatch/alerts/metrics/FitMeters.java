package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.DistributionSummary;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.util.concurrent.TimeUnit;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The window fits of each stream: {@value OddswatchMeters#FIT_DURATION} (wall-clock time of one
 * final window's fit) and {@value OddswatchMeters#FIT_ITERATIONS} (its Newton iterations), and the
 * state they leave, as gauges of the latest final window: prevalence and its interval, the window's
 * events, each coefficient's odds ratio and interval (tagged {@code term} and {@code level}) and the
 * baseline model's calibration. A figure that cannot be computed, or that the small-cell rule
 * withholds ({@link SmallCellPolicy}), reads NaN, so an earlier window's value does not stay on
 * show either. A stream's series appear with its first final window and leave with it
 * ({@link #forgetStream}).
 */
public final class FitMeters implements MeterBinder {

    private final StreamMeters series = new StreamMeters();

    @Override
    public void bindTo(MeterRegistry registry) {
        series.bindTo(registry);
    }

    /** One final window's fit: its wall-clock duration and Newton iterations. */
    public void fitted(String stream, long durationNanos, int iterations) {
        MeterRegistry r = series.registry();
        if (r == null) {
            return;
        }
        series.keep(Timer.builder(OddswatchMeters.FIT_DURATION).description("Wall-clock time of one window fit")
                .tag("stream", stream).register(r)).record(durationNanos, TimeUnit.NANOSECONDS);
        series.keep(DistributionSummary.builder(OddswatchMeters.FIT_ITERATIONS)
                .description("Newton iterations of one window fit").baseUnit("iterations").tag("stream", stream)
                .register(r)).record(iterations);
    }

    /** The gauges of one final estimate, under its monitor's small-cell rule. */
    public void finalEstimate(WindowEstimate e, SmallCellPolicy policy) {
        SmallCellPolicy.Withheld withheld = policy.assess(e);
        boolean casesShown = withheld.cases() == null;
        Tags stream = Tags.of("stream", e.stream());
        PrevalenceEstimate p = casesShown ? e.prevalence() : null;
        set(OddswatchMeters.PREVALENCE, "Share of positives in the latest final window", stream,
                p == null ? null : p.value());
        set(OddswatchMeters.PREVALENCE_LOWER, "Lower interval bound of the prevalence", stream,
                p == null ? null : p.lower());
        set(OddswatchMeters.PREVALENCE_UPPER, "Upper interval bound of the prevalence", stream,
                p == null ? null : p.upper());
        series.set(OddswatchMeters.WINDOW_EVENTS, "Events in the latest final window", "events", stream,
                withheld.events() == null ? (double) e.events() : null);
        for (CoefficientEstimate c : e.coefficients()) {
            if (c.oddsRatio() == null) {
                continue;
            }
            Tags t = stream.and("term", c.term(), "level", c.level() == null ? OddswatchMeters.NONE : c.level());
            set(OddswatchMeters.ODDS_RATIO, "Odds ratio of a model term in the latest final window", t,
                    casesShown ? c.oddsRatio() : null);
            set(OddswatchMeters.ODDS_RATIO_LOWER, "Lower interval bound of the odds ratio", t,
                    casesShown ? c.lower() : null);
            set(OddswatchMeters.ODDS_RATIO_UPPER, "Upper interval bound of the odds ratio", t,
                    casesShown ? c.upper() : null);
        }
        CalibrationEstimate c = withheld.calibration() == null ? e.calibration() : null;
        if (c != null || e.calibration() != null) {
            set(OddswatchMeters.CALIBRATION_OE, "Observed over expected positives under the baseline model", stream,
                    c == null ? null : c.observedExpected());
            set(OddswatchMeters.CALIBRATION_SLOPE, "Calibration slope of the baseline model", stream,
                    c == null ? null : c.slope());
            set(OddswatchMeters.CALIBRATION_HL_P, "Hosmer-Lemeshow p-value of the baseline model", stream,
                    c == null ? null : c.hosmerLemeshowP());
        }
    }

    /** Removes the stream's series: it left the instance. */
    public void forgetStream(String stream) {
        series.forget(stream);
    }

    private void set(String name, String description, Tags tags, Double value) {
        series.set(name, description, null, tags, value);
    }
}
