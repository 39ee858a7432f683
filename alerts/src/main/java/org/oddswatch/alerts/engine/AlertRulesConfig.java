package org.oddswatch.alerts.engine;

/**
 * Rule settings of one monitor, bound by Jackson from the {@code rules} mapping of a monitor
 * definition. Null sections mean the rule is off; defaults are documented per section.
 */
public record AlertRulesConfig() {
}
