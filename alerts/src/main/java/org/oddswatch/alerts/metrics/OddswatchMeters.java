package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.DistributionSummary;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tag;
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
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.rules.CusumReading;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.result.CoefficientEstimate;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * Every oddswatch meter, registered in one binder. Gauges hold the latest final window's figures;
 * a figure that cannot be computed, or that the small-cell rule withholds ({@link SmallCellPolicy}),
 * reads NaN (Prometheus shows {@code NaN}). Tags are bounded and never carry a record's values: the
 * monitor (declared), the stream (only streams accepted within the split's {@code maxStreams}; a
 * record routed to no stream is tagged {@code none}), the watched term and level (declared in the
 * definition), the rule (a fixed set), the event outcome and reason (fixed sets). A missing level is
 * tagged {@code none}. A stream's series are removed when it leaves the instance ({@link #forgetStream}).
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
    /** The value holders of the gauges, by name and tags (the stream tag kept apart for {@link #forgetStream}). */
    private final Map<GaugeKey, AtomicReference<Double>> gauges = new ConcurrentHashMap<>();

    private record GaugeKey(String name, String stream, Tags tags) {
    }

    @Override
    public void bindTo(MeterRegistry registry) {
        this.registry = registry;
    }

    /**
     * Prevalence, its interval, window events, odds ratios and calibration of one final estimate,
     * under the small-cell rule: a figure the policy withholds reads NaN (never the small count or a
     * figure resting on it), so an earlier window's value does not stay on show either.
     */
    public void onEstimate(WindowEstimate e, SmallCellPolicy policy) {
        if (registry == null) {
            return;
        }
        SmallCellPolicy.Withheld withheld = policy.assess(e);
        boolean casesShown = withheld.cases() == null;
        Tags stream = Tags.of("stream", e.stream());
        PrevalenceEstimate p = casesShown ? e.prevalence() : null;
        set(PREVALENCE, "Share of positives in the latest final window", stream, p == null ? null : p.value());
        set(PREVALENCE_LOWER, "Lower interval bound of the prevalence", stream, p == null ? null : p.lower());
        set(PREVALENCE_UPPER, "Upper interval bound of the prevalence", stream, p == null ? null : p.upper());
        setWithUnit(WINDOW_EVENTS, "Events in the latest final window", stream,
                withheld.events() == null ? (double) e.events() : null, "events");
        for (CoefficientEstimate c : e.coefficients()) {
            if (c.oddsRatio() == null) {
                continue;
            }
            Tags t = stream.and("term", c.term(), "level", c.level() == null ? NONE : c.level());
            set(ODDS_RATIO, "Odds ratio of a model term in the latest final window", t, casesShown ? c.oddsRatio() : null);
            set(ODDS_RATIO_LOWER, "Lower interval bound of the odds ratio", t, casesShown ? c.lower() : null);
            set(ODDS_RATIO_UPPER, "Upper interval bound of the odds ratio", t, casesShown ? c.upper() : null);
        }
        CalibrationEstimate c = withheld.calibration() == null ? e.calibration() : null;
        if (c != null || e.calibration() != null) {
            set(CALIBRATION_OE, "Observed over expected positives under the baseline model", stream,
                    c == null ? null : c.observedExpected());
            set(CALIBRATION_SLOPE, "Calibration slope of the baseline model", stream, c == null ? null : c.slope());
            set(CALIBRATION_HL_P, "Hosmer-Lemeshow p-value of the baseline model", stream,
                    c == null ? null : c.hosmerLemeshowP());
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
     * One consumed record's outcome in one monitor: {@code accepted}, {@code rejected}, {@code late}
     * or {@code duplicate}, with the rejection reason ({@code none} otherwise).
     *
     * @param monitor the monitor's name, or null ({@code none}) when no monitor could read it
     * @param stream a stream the monitor holds, or null ({@code none}) for a record routed to no
     *     stream: never a name made from a rejected record's values
     */
    public void countEvent(String monitor, String stream, String outcome, String reason) {
        MeterRegistry r = registry;
        if (r != null) {
            eventCounter(r, monitor, stream, outcome, reason).increment();
        }
    }

    /**
     * The record-outcome counter of {@link #countEvent} (for callers that add up counts first).
     * Its tags are bounded: the monitor (declared), the stream (one of at most {@code maxStreams}
     * accepted streams, or {@code none}), the outcome and reason (fixed sets).
     */
    public static Counter eventCounter(MeterRegistry registry, String monitor, String stream, String outcome,
                                       String reason) {
        return Counter.builder(EVENTS).description("Consumed records by outcome").baseUnit("events")
                .tags("monitor", monitor == null ? NONE : monitor, "stream", stream == null ? NONE : stream,
                        "outcome", outcome, "reason", reason == null ? NONE : reason)
                .register(registry);
    }

    /**
     * Removes every series tagged with {@code stream} (gauges, CUSUM, alert state, fit timers,
     * record counters): called when the stream leaves this instance (its partition was revoked or
     * lost), so a scrape shows only the streams this instance holds. A stream that comes back
     * starts new series (counters from zero, which Prometheus' {@code rate} reads as a restart).
     */
    public void forgetStream(String stream) {
        MeterRegistry r = registry;
        if (r == null) {
            return;
        }
        gauges.keySet().removeIf(key -> stream.equals(key.stream()));
        for (Meter meter : List.copyOf(r.getMeters())) {
            if (meter.getId().getName().startsWith("oddswatch.") && stream.equals(meter.getId().getTag("stream"))) {
                r.remove(meter);
            }
        }
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
        GaugeKey key = new GaugeKey(name, tags.stream().filter(t -> t.getKey().equals("stream")).map(Tag::getValue)
                .findFirst().orElse(null), tags);
        AtomicReference<Double> holder = gauges.computeIfAbsent(key, k -> {
            AtomicReference<Double> h = new AtomicReference<>(Double.NaN);
            Gauge.builder(name, h, ref -> Objects.requireNonNullElse(ref.get(), Double.NaN)).description(description)
                    .baseUnit(unit).tags(tags).strongReference(true).register(r);
            return h;
        });
        holder.set(value == null ? Double.NaN : value);
    }
}
