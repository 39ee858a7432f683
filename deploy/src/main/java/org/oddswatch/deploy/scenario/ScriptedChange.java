package org.oddswatch.deploy.scenario;

import java.time.Duration;
import java.util.Objects;

/**
 * A change in the truth at a known simulated time, given as an offset from the feed's start so that
 * a script moves with {@link ScenarioOptions#start()}. From {@code start + after} on:
 * <ul>
 *   <li>{@link Kind#ODDS_RATIO}: the true odds ratio of {@code term} (at {@code level}) is multiplied
 *       by {@code factor}, i.e. its log-odds coefficient grows by ln(factor);</li>
 *   <li>{@link Kind#PREVALENCE}: every event's true probability is multiplied by {@code factor}
 *       (capped at 1). The baseline model does not expect this: its calibration (observed/expected)
 *       moves by about that factor while the odds ratios stay almost where they were.</li>
 * </ul>
 * Several changes add up (factors multiply).
 */
public record ScriptedChange(Kind kind, Duration after, String term, String level, double factor) {

    public enum Kind { ODDS_RATIO, PREVALENCE }

    public ScriptedChange {
        Objects.requireNonNull(kind, "kind");
        Objects.requireNonNull(after, "after");
        if (!(factor > 0) || !Double.isFinite(factor)) {
            throw new IllegalArgumentException("factor must be a positive number, got " + factor);
        }
        if (kind == Kind.ODDS_RATIO) {
            Objects.requireNonNull(term, "term");
        }
    }

    /** The odds ratio of {@code term = level} is multiplied by {@code factor} from {@code after} on. */
    public static ScriptedChange oddsRatio(String term, String level, double factor, Duration after) {
        return new ScriptedChange(Kind.ODDS_RATIO, after, term, level, factor);
    }

    /** Every event's probability is multiplied by {@code factor} from {@code after} on. */
    public static ScriptedChange prevalence(double factor, Duration after) {
        return new ScriptedChange(Kind.PREVALENCE, after, null, null, factor);
    }

    /** Plain-language description, e.g. {@code odds ratio of household_contact=yes x2.0 from week 16}. */
    public String describe() {
        String when = after.toDays() % 7 == 0 ? "week " + after.toDays() / 7 : after.toString();
        return switch (kind) {
            case ODDS_RATIO -> "odds ratio of " + term + (level == null ? "" : "=" + level) + " x" + factor + " from " + when;
            case PREVALENCE -> "prevalence x" + factor + " from " + when + " (not in the baseline model)";
        };
    }
}
