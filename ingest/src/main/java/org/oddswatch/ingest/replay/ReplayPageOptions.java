package org.oddswatch.ingest.replay;

import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.report.html.ReportOptions;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * What a replay's {@code report.html} needs besides its estimates and alerts: the small-cell limit,
 * the rejects read back from {@code rejects.jsonl} ({@link RejectTimes}), and each stream's rule
 * settings (those of its monitor: the stream name up to its first {@code /}).
 */
final class ReplayPageOptions {

    private ReplayPageOptions() {
    }

    static ReportOptions of(Path rejectsFile, List<MonitorDefinition> monitors, int withholdBelow) throws IOException {
        return ReportOptions.withholdingBelow(withholdBelow)
                .withRejects(RejectTimes.read(rejectsFile, monitors))
                .withRules(stream -> rules(monitors, stream));
    }

    private static AlertRulesConfig rules(List<MonitorDefinition> monitors, String stream) {
        int slash = stream.indexOf('/');
        String monitor = slash < 0 ? stream : stream.substring(0, slash);
        for (MonitorDefinition definition : monitors) {
            if (definition.name().equals(monitor)) {
                return definition.rules();
            }
        }
        return null;
    }
}
