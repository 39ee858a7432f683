package org.oddswatch.alerts.lifecycle;

import org.oddswatch.alerts.rules.Format;
import org.oddswatch.alerts.rules.Measurement;
import org.oddswatch.alerts.rules.Reading;

/**
 * The one-paragraph message of an alert: what moved and by how much (the rule's own sentence),
 * against which baseline, in which window, on how many events, how to reproduce it, and the
 * caution that the signal calls for investigation only.
 */
public final class AlertText {

    /** The caution every alert and report carries. */
    public static final String CAUTION = "This signal calls for investigation; it is not a diagnosis or proof of cause."
            + " Local public-health rules, data-protection law and qualified epidemiologists decide what is done.";

    private AlertText() {
    }

    /**
     * @param side where the measured value lies (above or below the raise limit; within the clear
     *     limit for a clearing)
     */
    public static String compose(String stream, Reading r, AlertState state, int run, Measurement.Side side,
                                 String baselineLabel, String replayCommand) {
        StringBuilder b = opening(stream, r, state).append(", on ").append(Format.count(r.events())).append(" events, ")
                .append(r.detail()).append('.');
        b.append(' ').append(measured(r, state, side));
        return closing(b, r, state, run, baselineLabel, replayCommand);
    }

    /**
     * The paragraph of an alert whose figures are withheld under the small-cell rule: the same
     * opening, run, baseline, replay command and caution, but neither the rule's own sentence nor
     * the measured value (both quote the window's figures); instead the sentence that they are
     * withheld and why. The events are named unless they are a small count themselves.
     *
     * @param events the events, or the withheld label (e.g. {@code <5}) when they are a small count
     * @param reason the small count that withholds the figures, e.g. {@code positives from 1 to 4}
     */
    public static String composeWithheld(String stream, Reading r, AlertState state, int run, String events,
                                         String reason, String baselineLabel, String replayCommand) {
        String measure = r.measurement() == null ? null : r.measurement().measure();
        StringBuilder b = opening(stream, r, state).append(", on ").append(events).append(" events: ")
                .append(Measurement.words(measure)).append(measure == null ? "" : " (" + measure + ")")
                .append(" and the other figures of this reading are withheld for small numbers (").append(reason)
                .append("), as in the window's published estimate.");
        return closing(b, r, state, run, baselineLabel, replayCommand);
    }

    private static StringBuilder opening(String stream, Reading r, AlertState state) {
        String opening = switch (state) {
            case RAISED -> "Raised";
            case CONTINUING -> "Continuing";
            case CLEARED -> "Cleared";
        };
        return new StringBuilder().append(opening).append(" (").append(r.rule()).append(", ")
                .append(r.subject().label()).append(") on stream ").append(stream).append(": in the window ")
                .append(r.windowStart()).append(" to ").append(r.windowEnd()).append(" (end exclusive)");
    }

    private static String closing(StringBuilder b, Reading r, AlertState state, int run, String baselineLabel,
                                  String replayCommand) {
        switch (state) {
            case RAISED -> b.append(run > 1 ? " Raised after " + run + " readings in a row beyond the limit." : "");
            case CONTINUING -> b.append(" The condition persists; the episode stays open.");
            case CLEARED -> b.append(" The statistic has been back inside its clear limit for ").append(run)
                    .append(run == 1 ? " reading" : " readings in a row").append("; the episode is closed.");
        }
        b.append(" Baseline: ").append(baselineLabel).append('.');
        b.append(" Reproduce with: ").append(replayCommand).append(". ");
        b.append(CAUTION);
        return b.toString();
    }

    /**
     * The measure sentence, e.g. "Measured: the Hosmer-Lemeshow p-value (hosmer-lemeshow-p) =
     * 9.38e-06, below the limit 1.00e-04; clears after 2 windows in a row at or above 1.00e-03." The
     * measure's words and name, its value, the side of the limit and the limit, and the hysteresis.
     */
    static String measured(Reading r, AlertState state, Measurement.Side side) {
        Measurement m = r.measurement();
        String measure = m.measure();
        boolean twoSided = Measurement.ODDS_RATIO_Z.equals(measure);
        StringBuilder b = new StringBuilder("Measured: ").append(Measurement.words(measure)).append(" (")
                .append(measure).append(") = ").append(Measurement.format(measure, m.value()));
        String clear = Measurement.format(measure, r.clearLimit());
        if (state == AlertState.CLEARED) {
            b.append(", back inside the clear limit ").append(twoSided ? "±" + clear : clear);
            return b.append('.').toString();
        }
        boolean below = side == Measurement.Side.BELOW;
        Double limit = twoSided && below && r.limit() != null ? -r.limit() : r.limit();
        b.append(", ").append(twoSided ? "at or " : "").append(below ? "below" : "above").append(" the limit ")
                .append(Measurement.format(measure, limit));
        if (r.clearLimit() != null) {
            String back = twoSided ? "inside ±" + clear
                    : Measurement.CUSUM_LLR.equals(measure) ? "without a signal, each ending below " + clear
                    : (below ? "at or above " : "at or below ") + clear;
            b.append("; clears after ").append(r.clearAfter()).append(r.clearAfter() == 1 ? " window " : " windows in a row ")
                    .append(back);
        }
        return b.append('.').toString();
    }
}
