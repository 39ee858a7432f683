package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.DistributionSummary;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicReference;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Every oddswatch meter, registered in one binder. Gauges hold the latest final window's figures;
 * a figure that cannot be computed reads NaN (Prometheus shows {@code NaN}). Tags are bounded: the
 * stream (bounded by the split's {@code maxStreams}), the watched term and level (declared in the
 * definition), the rule (a fixed set), the event outcome and reason (fixed sets), the chart level
 * ({@code up}/{@code down}). A missing level is tagged {@code none}.
 *
 * <p>Call {@link #bindTo} once before updating; updates before that are ignored.
 */
public final class OddswatchMeters implements MeterBinder {

    /** Meter names (dot-separated; Prometheus shows them with underscores and unit suffixes). */
    public static final String PREVALENCE = "oddswatch.prevalence";
    public static final String PREVALENCE_LOWER = "oddswatch.prevalence.lower";
    public static final String PREVALENCE_UPPER = "oddswatch.prevalence.upper";
    public static final String WINDOW_EVENTS = "oddswatch.window.events";
    public static final String ODDS_RATIO = "oddswatch.odds.ratio";
    public static final String ODDS_RATIO_LOWER = "oddswatch.odds.ratio.lower";
    public static final String ODDS_RATIO_UPPER = "oddswatch.odds.ratio.upper";
    public static final String CALIBRATION_OE = "oddswatch.calibration.observed.expected";
    public static final String CALIBRATION_SLOPE = "oddswatch.calibration.slope";
    public static final String CALIBRATION_HL_P = "oddswatch.calibration.hosmer.lemeshow.p";
    public static final String CUSUM = "oddswatch.cusum";
    public static final String ALERT_STATE = "oddswatch.alert.state";
    public static final String FIT_DURATION = "oddswatch.fit.duration";
    public static final String FIT_ITERATIONS = "oddswatch.fit.iterations";
    public static final String EVENTS = "oddswatch.events";
    public static final String WEBHOOK_ATTEMPTS = "oddswatch.webhook.attempts";
    public static final String WEBHOOK_FAILURES = "oddswatch.webhook.failures";

    /** Tag value for an absent level or reason. */
    public static final String NONE = "none";

    private volatile MeterRegistry registry;
    private final Map<String, AtomicReference<Double>> gauges = new ConcurrentHashMap<>();

    @Override
    public void bindTo(MeterRegistry registry) {
        this.registry = registry;
    }

    /** Prevalence, its interval, window events, odds ratios and calibration of one final estimate. */
    public void onEstimate(WindowEstimate e) {
        if (registry == null) {
            return;
        }
        Tags stream = Tags.of("stream", e.stream());
        Double value = e.prevalence() == null ? null : e.prevalence().value();
        set(PREVALENCE, "Share of positives in the latest final window", stream, value);
        set(PREVALENCE_LOWER, "Lower interval bound of the prevalence", stream,
                e.prevalence() == null ? null : e.prevalence().lower());
        set(PREVALENCE_UPPER, "Upper interval bound of the prevalence", stream,
                e.prevalence() == null ? null : e.prevalence().upper());
        setWithUnit(WINDOW_EVENTS, "Events in the latest final window", stream, (double) e.events(), "events");
        for (CoefficientEstimate c : e.coefficients()) {
            if (c.oddsRatio() == null) {
                continue;
            }
            Tags t = stream.and("term", c.term(), "level", c.level() == null ? NONE : c.level());
            set(ODDS_RATIO, "Odds ratio of a model term in the latest final window", t, c.oddsRatio());
            set(ODDS_RATIO_LOWER, "Lower interval bound of the odds ratio", t, c.lower());
            set(ODDS_RATIO_UPPER, "Upper interval bound of the odds ratio", t, c.upper());
        }
        CalibrationEstimate c = e.calibration();
        if (c != null) {
            set(CALIBRATION_OE, "Observed over expected positives under the baseline model", stream, c.observedExpected());
            set(CALIBRATION_SLOPE, "Calibration slope of the baseline model", stream, c.slope());
            set(CALIBRATION_HL_P, "Hosmer-Lemeshow p-value of the baseline model", stream, c.hosmerLemeshowP());
        }
    }

    /** Alert state gauge: 1 while the episode of (rule, subject) is open, 0 once cleared. */
    public void onAlert(Alert a) {
        if (registry == null) {
            return;
        }
        set(ALERT_STATE, "1 while an alert episode is open, 0 when cleared", subjectTags(a.stream(), a.rule(), a.subject()),
                a.state() == AlertState.CLEARED ? 0.0 : 1.0);
    }

    /** Current CUSUM chart values of one stream. */
    public void onCusum(String stream, List<CusumReading> readings) {
        if (registry == null) {
            return;
        }
        for (CusumReading r : readings) {
            set(CUSUM, "Current value of a risk-adjusted Bernoulli CUSUM chart", subjectTags(stream, r.rule(), r.subject()),
                    r.value());
        }
    }

    /** One model fit: its wall-clock duration and Newton iterations. */
    public void recordFit(String stream, long durationNanos, int iterations) {
        MeterRegistry r = registry;
        if (r == null) {
            return;
        }
        Timer.builder(FIT_DURATION).description("Wall-clock time of one window fit").tag("stream", stream).register(r)
                .record(durationNanos, TimeUnit.NANOSECONDS);
        DistributionSummary.builder(FIT_ITERATIONS).description("Newton iterations of one window fit")
                .baseUnit("iterations").tag("stream", stream).register(r).record(iterations);
    }

    /**
     * One consumed record's outcome: {@code accepted}, {@code rejected}, {@code late} or
     * {@code duplicate}, with the rejection reason ({@code none} otherwise).
     */
    public void countEvent(String stream, String outcome, String reason) {
        MeterRegistry r = registry;
        if (r == null) {
            return;
        }
        Counter.builder(EVENTS).description("Consumed records by outcome").baseUnit("events")
                .tags("stream", stream, "outcome", outcome, "reason", reason == null ? NONE : reason).register(r)
                .increment();
    }

    /** One webhook attempt: {@code success}, {@code status}, {@code error} or {@code timeout}. */
    public void webhookAttempt(String outcome) {
        MeterRegistry r = registry;
        if (r != null) {
            Counter.builder(WEBHOOK_ATTEMPTS).description("Webhook delivery attempts by outcome").tag("outcome", outcome)
                    .register(r).increment();
        }
    }

    /** One alert the webhook gave up on: {@code attempts-exhausted}, {@code queue-full} or {@code interrupted}. */
    public void webhookFailure(String reason) {
        MeterRegistry r = registry;
        if (r != null) {
            Counter.builder(WEBHOOK_FAILURES).description("Alerts the webhook could not deliver").tag("reason", reason)
                    .register(r).increment();
        }
    }

    private static Tags subjectTags(String stream, String rule, AlertSubject subject) {
        return Tags.of("stream", stream, "rule", rule, "term", subject.term(), "level",
                subject.level() == null ? NONE : subject.level());
    }

    private void set(String name, String description, Tags tags, Double value) {
        setWithUnit(name, description, tags, value, null);
    }

    private void setWithUnit(String name, String description, Tags tags, Double value, String unit) {
        MeterRegistry r = registry;
        String key = name + tags;
        AtomicReference<Double> holder = gauges.computeIfAbsent(key, k -> {
            AtomicReference<Double> h = new AtomicReference<>(Double.NaN);
            Gauge.builder(name, h, ref -> Objects.requireNonNullElse(ref.get(), Double.NaN)).description(description)
                    .baseUnit(unit).tags(tags).strongReference(true).register(r);
            return h;
        });
        holder.set(value == null ? Double.NaN : value);
    }
}
