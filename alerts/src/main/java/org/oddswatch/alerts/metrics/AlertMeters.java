package org.oddswatch.alerts.metrics;

import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.util.List;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.rules.CusumReading;

/**
 * The rules and their alerts on each stream: {@value OddswatchMeters#ALERTS} (alert messages
 * published, by {@code rule} and {@code state}: raised, continuing, cleared),
 * {@value OddswatchMeters#ALERT_STATE} (1 while the episode of a rule and subject is open, 0 once
 * cleared; tagged {@code rule}, {@code term}, {@code level}) and {@value OddswatchMeters#CUSUM} (the
 * current value of each CUSUM chart). A stream's series leave with it ({@link #forgetStream}).
 */
public final class AlertMeters implements MeterBinder {

    private final StreamMeters series = new StreamMeters();

    @Override
    public void bindTo(MeterRegistry registry) {
        series.bindTo(registry);
    }

    /** A published alert message: counted, and its episode's state gauge set. */
    public void alert(Alert alert) {
        MeterRegistry r = series.registry();
        if (r == null) {
            return;
        }
        series.keep(Counter.builder(OddswatchMeters.ALERTS).description("Alert messages published, by rule and state")
                .tags("stream", alert.stream(), "rule", alert.rule(), "state", alert.state().toString())
                .register(r)).increment();
        restored(alert);
    }

    /** An episode still open after a restart (not published again): only its state gauge is set. */
    public void restored(Alert alert) {
        series.set(OddswatchMeters.ALERT_STATE, "1 while an alert episode is open, 0 when cleared", null,
                subjectTags(alert.stream(), alert.rule(), alert.subject()),
                alert.state() == AlertState.CLEARED ? 0.0 : 1.0);
    }

    /** Current CUSUM chart values of one stream. */
    public void cusum(String stream, List<CusumReading> readings) {
        for (CusumReading r : readings) {
            series.set(OddswatchMeters.CUSUM, "Current value of a risk-adjusted Bernoulli CUSUM chart", null,
                    subjectTags(stream, r.rule(), r.subject()), r.value());
        }
    }

    /** Removes the stream's series: it left the instance. */
    public void forgetStream(String stream) {
        series.forget(stream);
    }

    private static Tags subjectTags(String stream, String rule, AlertSubject subject) {
        return Tags.of("stream", stream, "rule", rule, "term", subject.term(), "level",
                subject.level() == null ? OddswatchMeters.NONE : subject.level());
    }
}
