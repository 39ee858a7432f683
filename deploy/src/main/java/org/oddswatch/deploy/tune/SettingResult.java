package org.oddswatch.deploy.tune;

import com.fasterxml.jackson.annotation.JsonIgnore;
import java.time.Instant;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.ingest.replay.RuleRerun;

/**
 * What one rule setting gives on a replay: its alert messages, the episodes they belong to (distinct
 * episode ids), and the first episode raised in a window ending at or after {@code after}.
 *
 * @param name the setting's name ({@code setting-N})
 * @param definition the definition the setting ran (a file given, or the one written for a grid point)
 * @param changes the grid point's keys and values (empty for a definition given)
 * @param messages alert messages
 * @param episodes distinct episodes
 * @param after the time asked about, or null
 * @param firstRaised the first message raising an episode in a window ending at or after {@code after}, or null
 * @param millis the re-run's time in milliseconds (printed, not written: settings.jsonl stays the same on every run)
 */
public record SettingResult(String name, String definition, Map<String, String> changes, int messages, int episodes,
                            Instant after, First firstRaised, @JsonIgnore long millis) {

    /** An episode's first message: where and when. */
    public record First(String stream, String rule, String term, String level, Instant windowEnd, String id) {
    }

    /** The summary of {@code lines}. */
    public static SettingResult of(String name, String definition, Map<String, String> changes,
                                   List<RuleRerun.Line> lines, Instant after, long millis) {
        Set<String> episodes = new LinkedHashSet<>();
        First first = null;
        for (RuleRerun.Line line : lines) {
            Alert a = line.alert();
            episodes.add(a.id());
            if (a.state() == AlertState.RAISED && (after == null || !a.windowEnd().isBefore(after))
                    && (first == null || a.windowEnd().isBefore(first.windowEnd()))) {
                first = new First(a.stream(), a.rule(), a.subject().term(), a.subject().level(), a.windowEnd(), a.id());
            }
        }
        return new SettingResult(name, definition, changes, lines.size(), episodes.size(), after, first, millis);
    }
}
