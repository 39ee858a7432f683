package org.oddswatch.alerts.lifecycle;

/**
 * The statistics behind an alert; fields that do not apply to the rule are null.
 *
 * @param z drift z statistic
 * @param cusum CUSUM statistic
 * @param lower lower interval bound of the observed value
 * @param upper upper interval bound
 * @param consecutiveWindows how many consecutive final windows were beyond the limit
 */
public record Evidence(Double z, Double cusum, Double lower, Double upper, Integer consecutiveWindows) {
}
