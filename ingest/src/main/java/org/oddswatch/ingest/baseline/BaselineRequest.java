package org.oddswatch.ingest.baseline;

import java.nio.file.Path;
import java.time.Instant;
import org.oddswatch.ingest.replay.InputFormat;

/**
 * What to fit a baseline on.
 *
 * @param events the event file (JSON Lines or CSV)
 * @param format its format, or null to tell by the file name
 * @param from start of the baseline period (inclusive event time)
 * @param to end of the period (exclusive)
 * @param outDir where the baseline files are written
 * @param monitor only this monitor, or null for every monitor
 * @param pooled one baseline per monitor over all its split values, instead of one per stream
 * @param allowWeak write a model fitted from too little information too (flagged), instead of refusing it
 */
public record BaselineRequest(Path events, InputFormat format, Instant from, Instant to, Path outDir,
                              String monitor, boolean pooled, boolean allowWeak) {

    public BaselineRequest {
        if (from == null || to == null || !from.isBefore(to)) {
            throw new IllegalArgumentException("the baseline period needs --from before --to");
        }
    }
}
