package org.oddswatch.estimator;

import java.util.List;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.CalibrationEstimate;
import org.oddswatch.estimator.window.WindowData;

/** Bridges a window to the calibration statistics of a baseline model. */
final class BaselineCalibration {

    private BaselineCalibration() {
    }

    static CalibrationEstimate assess(WindowData data, BaselineModel baseline, EstimatorOptions options,
                                      List<String> notes) {
        // Wired to CalibrationStatistics once that class is committed.
        notes.add("calibration of the baseline model is not computed in this build");
        return null;
    }
}
