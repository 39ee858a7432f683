package org.oddswatch.alerts.metrics;

/**
 * The names of oddswatch's meters (dot-separated; Prometheus shows them with underscores and unit
 * suffixes) and the binders that register them, one per concern, in the manner of Micrometer's own
 * binders: {@link RecordMeters} (records by outcome), {@link FitMeters} (window fits and the latest
 * final window's figures), {@link AlertMeters} (alert messages, open episodes, CUSUM values) and the
 * webhook sink's delivery counters. Tags are bounded and never carry a record's values: the monitor
 * (declared), the stream (only streams accepted within the split's {@code maxStreams}; a record
 * routed to no stream is tagged {@value #NONE}), the watched term and level (declared), the rule (a
 * fixed set), the record outcome and reason (fixed sets). A stream's series are removed when it
 * leaves the instance.
 */
public final class OddswatchMeters {

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
    public static final String FIT_DURATION = "oddswatch.fit.duration";
    public static final String FIT_ITERATIONS = "oddswatch.fit.iterations";
    public static final String CUSUM = "oddswatch.cusum";
    public static final String ALERT_STATE = "oddswatch.alert.state";
    public static final String ALERTS = "oddswatch.alerts";
    /** Consumed records by outcome (accepted, rejected, late, duplicate), once per record and monitor. */
    public static final String RECORDS = "oddswatch.records";
    public static final String WEBHOOK_ATTEMPTS = "oddswatch.webhook.attempts";
    public static final String WEBHOOK_FAILURES = "oddswatch.webhook.failures";
    /** Lines the live service could not append to an {@code outputs.estimatesFile} (tag {@code monitor}). */
    public static final String FILE_FAILURES = "oddswatch.output.file.failures";

    /** Tag value for an absent level, reason or stream. */
    public static final String NONE = "none";

    private OddswatchMeters() {
    }
}
