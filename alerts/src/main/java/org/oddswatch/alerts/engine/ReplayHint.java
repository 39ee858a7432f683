package org.oddswatch.alerts.engine;

/**
 * What an alert's replay command needs: the monitor definition path and the input, either a file
 * path or a topic name. The window bounds come from the alert itself.
 */
public record ReplayHint(String configPath, String inputFile, String topic) {
}
