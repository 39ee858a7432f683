package org.oddswatch.ingest.baseline;

import java.nio.file.Path;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * One baseline the builder produced, or could not.
 *
 * @param stream the stream, or the monitor name for a pooled or unsplit baseline
 * @param file the file written, or null when the fit failed
 * @param events accepted events of the period (complete or not)
 * @param model the fitted model, or null
 * @param problem why no model could be fitted (for instance no positives), or null
 */
public record BuiltBaseline(String monitor, String stream, Path file, long events, BaselineModel model,
                            String problem) {

    public boolean ok() {
        return problem == null;
    }
}
