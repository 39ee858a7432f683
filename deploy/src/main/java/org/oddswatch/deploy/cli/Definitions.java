package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;

/** Loading a monitor definition named by {@code --config}, with errors as configuration errors (exit 2). */
final class Definitions {

    private Definitions() {
    }

    static MonitorConfig load(Path config) {
        if (!Files.isRegularFile(config)) {
            throw UserError.config("no such definition file: " + config);
        }
        try {
            return DefinitionLoader.load(config);
        } catch (DefinitionException e) {
            throw UserError.config(e.getMessage(), e);
        }
    }

    /**
     * Loads the definition and prints its notices (for example a rule that runs because its section
     * is not listed) to {@code err}, one {@code note:} line each.
     */
    static MonitorConfig load(Path config, PrintWriter err) {
        MonitorConfig loaded = load(config);
        for (MonitorDefinition monitor : loaded.monitors()) {
            for (String notice : monitor.notices()) {
                err.println("note: " + config + ": monitor " + monitor.name() + ": " + notice);
            }
        }
        err.flush();
        return loaded;
    }

    static Path requireFile(Path file, String option) {
        if (!Files.isRegularFile(file)) {
            throw UserError.config(option + ": no such file: " + file);
        }
        return file;
    }
}
