package org.oddswatch.alerts.lifecycle;

/**
 * One figure an alert or incident leaves out under the small-cell rule, and why; written as
 * {@code {"field":"value","reason":"positives from 1 to 4"}} in the {@code withheld} list, like a
 * window estimate's.
 *
 * @param field the left-out field, e.g. {@code value}, {@code observed}, {@code evidence.z}
 * @param reason the small count it would disclose, as the window estimate states it
 */
public record WithheldFigure(String field, String reason) {
}
