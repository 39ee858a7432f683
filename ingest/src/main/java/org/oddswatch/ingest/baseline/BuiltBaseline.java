package org.oddswatch.ingest.baseline;

import java.nio.file.Path;
import org.oddswatch.estimator.calibration.BaselineModel;

/**
 * One baseline the builder produced, or could not.
 *
 * @param stream the stream, or the monitor name for a pooled or unsplit baseline
 * @param file the file written, or null when none was written
 * @param events accepted events of the period (complete or not)
 * @param positives positives among them
 * @param model the fitted model, or null when the fit failed
 * @param problem why no file was written (no positives, no convergence, too little information), or null
 * @param weakness why the model rests on too little information ({@code BaselineInformation}), or null;
 *     a weak model is written only when the request allows it
 */
public record BuiltBaseline(String monitor, String stream, Path file, long events, long positives, BaselineModel model,
                            String problem, String weakness) {

    /** Whether a file was written. */
    public boolean ok() {
        return problem == null;
    }

    /** {@code frozen}, {@code frozen-weak} (written although weak), {@code refused-weak} or {@code failed}. */
    public String state() {
        if (ok()) {
            return weakness == null ? "frozen" : "frozen-weak";
        }
        return model != null && weakness != null ? "refused-weak" : "failed";
    }
}
