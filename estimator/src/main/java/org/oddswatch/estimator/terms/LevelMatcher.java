package org.oddswatch.estimator.terms;

import java.util.List;

/** Finds the declared level a raw value stands for; shared by binary and categorical terms. */
final class LevelMatcher {

    private LevelMatcher() {
    }

    /**
     * Index of {@code raw} among {@code levels}, or -1. Strings match exactly; booleans and whole
     * numbers match their text form ({@code true}, {@code 3}), so a level declared as "1" matches 1.
     */
    static int indexOf(List<String> levels, Object raw) {
        String text = asText(raw);
        if (text == null) {
            return -1;
        }
        for (int i = 0; i < levels.size(); i++) {
            if (levels.get(i).equals(text)) {
                return i;
            }
        }
        return -1;
    }

    /** The text form of a raw value, or null when it has none (absent, or a non-integral number). */
    static String asText(Object raw) {
        if (raw instanceof String s) {
            return s;
        }
        if (raw instanceof Boolean b) {
            return b.toString();
        }
        if (raw instanceof Number n) {
            double d = n.doubleValue();
            if (d == Math.rint(d) && !Double.isInfinite(d)) {
                return Long.toString((long) d);
            }
            return n.toString();
        }
        return null;
    }
}
