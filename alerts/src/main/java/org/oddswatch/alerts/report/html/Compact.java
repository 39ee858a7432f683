package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.node.ArrayNode;
import java.math.BigDecimal;
import java.math.MathContext;

/**
 * Numbers of the page's data island, kept short: doubles rounded to six significant digits (more
 * than any chart or tooltip shows), non-finite values and nulls written as JSON null (a gap).
 */
final class Compact {

    private static final MathContext SIX = new MathContext(6);

    private Compact() {
    }

    /** {@code value} to six significant digits, or null when null or not finite. */
    static Double round(Double value) {
        if (value == null || !Double.isFinite(value)) {
            return null;
        }
        return value == 0 ? 0.0 : new BigDecimal(value).round(SIX).doubleValue();
    }

    /** Appends {@code value} rounded, or null. */
    static void add(ArrayNode array, Double value) {
        Double rounded = round(value);
        if (rounded == null) {
            array.addNull();
        } else {
            array.add(rounded);
        }
    }
}
