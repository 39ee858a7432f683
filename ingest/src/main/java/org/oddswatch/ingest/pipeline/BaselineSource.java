package org.oddswatch.ingest.pipeline;

import java.io.IOException;
import java.nio.file.Path;
import org.oddswatch.alerts.baseline.BaselineFile;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.ingest.definition.MonitorDefinition;

/** Reads a frozen baseline model file for a monitor. */
@FunctionalInterface
public interface BaselineSource {

    BaselineModel read(Path file, MonitorDefinition monitor) throws IOException;

    /**
     * Baseline files in the alerts module's format ({@link BaselineFile}), checked against the
     * monitor's design columns and definition checksum.
     */
    static BaselineSource files() {
        return (file, monitor) -> {
            BaselineModel model = BaselineFile.read(file, monitor.designCoder().columns());
            if (!BaselineFile.checksumMatches(model, monitor.checksum())) {
                throw new IOException("it was fitted under another definition of the outcome or terms (checksum "
                        + model.definitionChecksum() + ", this definition " + monitor.checksum() + ")");
            }
            return model;
        };
    }
}
