package org.oddswatch.alerts.output;

/**
 * One output as it leaves oddswatch: the monitor it belongs to, the key that names it, and its JSON
 * text with small cells already withheld.
 *
 * @param monitor the monitor whose outputs section applies
 * @param key estimates: {@code <stream>|<windowEnd>}; alerts: the alert id; rejects: where the
 *     record came from ({@code <topic>/<partition>/<offset>} or {@code line/<n>})
 * @param json one line of JSON
 */
public record Published(String monitor, String key, String json) {
}
