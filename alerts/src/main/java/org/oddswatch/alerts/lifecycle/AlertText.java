package org.oddswatch.alerts.lifecycle;

import org.oddswatch.alerts.rules.Format;
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

    public static String compose(String stream, Reading r, AlertState state, int run, String baselineLabel,
                                 String replayCommand) {
        String opening = switch (state) {
            case RAISED -> "Raised";
            case CONTINUING -> "Continuing";
            case CLEARED -> "Cleared";
        };
        StringBuilder b = new StringBuilder();
        b.append(opening).append(" (").append(r.rule()).append(", ").append(r.subject().label()).append(") on stream ")
                .append(stream).append(": in the window ").append(r.windowStart()).append(" to ").append(r.windowEnd())
                .append(" (end exclusive), on ").append(Format.count(r.events())).append(" events, ").append(r.detail())
                .append('.');
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
}
