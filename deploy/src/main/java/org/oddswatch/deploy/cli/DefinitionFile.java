package org.oddswatch.deploy.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.definition.MonitorDefinition;
import picocli.CommandLine.Option;

/**
 * The {@code --config} option of the commands that read a monitor definition (a picocli mixin), and
 * its loading with errors as configuration errors (exit 2).
 */
final class DefinitionFile {

    @Option(names = "--config", required = true, paramLabel = "FILE", description = "Monitor definition (YAML).")
    Path path;

    /**
     * Loads the definition and prints its notices (for example a rule that runs because its section
     * is not listed) to {@code err}, one {@code note:} line each.
     */
    MonitorConfig load(PrintWriter err) {
        MonitorConfig loaded = load(path);
        for (MonitorDefinition monitor : loaded.monitors()) {
            for (String notice : monitor.notices()) {
                err.println("note: " + path + ": monitor " + monitor.name() + ": " + notice);
            }
        }
        err.flush();
        return loaded;
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

    static Path requireFile(Path file, String option) {
        if (!Files.isRegularFile(file)) {
            throw UserError.config(option + ": no such file: " + file);
        }
        return file;
    }
}
