package org.oddswatch.alerts.rules;

import java.util.Locale;

/** Number formatting for alert and report texts: fixed locale, so texts are byte-identical everywhere. */
public final class Format {

    private Format() {
    }

    /** Three significant decimals for odds ratios and ratios; "n/a" for null or non-finite. */
    public static String num(Double value) {
        if (value == null || !Double.isFinite(value)) {
            return "n/a";
        }
        double a = Math.abs(value);
        String pattern = a != 0 && a < 0.01 ? "%.2e" : a < 10 ? "%.3f" : "%.2f";
        return String.format(Locale.ROOT, pattern, value);
    }

    /** Two decimals, for z and CUSUM statistics. */
    public static String stat(Double value) {
        return value == null || !Double.isFinite(value) ? "n/a" : String.format(Locale.ROOT, "%.2f", value);
    }

    /** An integer count with a thin separator, e.g. 12,480. */
    public static String count(long value) {
        return String.format(Locale.ROOT, "%,d", value);
    }

    /** A percentage with one decimal. */
    public static String percent(Double share) {
        return share == null || !Double.isFinite(share) ? "n/a" : String.format(Locale.ROOT, "%.1f%%", 100 * share);
    }
}
