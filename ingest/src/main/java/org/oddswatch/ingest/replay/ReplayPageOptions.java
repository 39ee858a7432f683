package org.oddswatch.ingest.replay;

import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.report.html.ReportOptions;
import org.oddswatch.ingest.definition.MonitorDefinition;

/**
 * What a replay's {@code report.html} needs besides its estimates and alerts: the small-cell rule
 * (that of {@code report.md}), the rejects read back from {@code rejects.jsonl} ({@link RejectTimes}),
 * and each stream's rule settings (those of its monitor).
 */
final class ReplayPageOptions {

    private ReplayPageOptions() {
    }

    static ReportOptions of(Path rejectsFile, List<MonitorDefinition> monitors, SmallCellPolicy cells)
            throws IOException {
        return ReportOptions.withholding(cells)
                .withRejects(RejectTimes.read(rejectsFile, monitors))
                .withRules(stream -> rules(monitors, stream));
    }

    private static AlertRulesConfig rules(List<MonitorDefinition> monitors, String stream) {
        try {
            return MonitorDefinition.ofStream(monitors, stream).rules();
        } catch (IllegalArgumentException e) {
            return null;
        }
    }
}
