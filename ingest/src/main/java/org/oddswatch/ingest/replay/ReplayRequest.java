package org.oddswatch.ingest.replay;

import java.nio.file.Path;
import java.time.Instant;

/**
 * What to replay.
 *
 * @param config the monitor definition file
 * @param input the event file
 * @param out the output folder (created if needed; files in it are replaced)
 * @param format the input format, or null to tell by the file name ({@link InputFormat#of})
 * @param from report windows starting at or after this, or null (every event is still replayed)
 * @param to report windows ending at or before this, or null
 * @param topic replay only the monitors reading this topic, or null for every monitor
 * @param keepRuleInputs also write {@code rules-input.jsonl} (the alert engines' inputs, for
 *     {@link RuleRerun}); off by default: it holds a line per event and slows the replay
 */
public record ReplayRequest(Path config, Path input, Path out, InputFormat format, Instant from, Instant to,
                            String topic, boolean keepRuleInputs) {

    public static ReplayRequest of(Path config, Path input, Path out) {
        return new ReplayRequest(config, input, out, null, null, null, null, false);
    }
}
