package org.oddswatch.alerts.engine;

import java.time.Instant;

/**
 * What an alert's replay command needs: the monitor definition path and the input, either a file
 * path or a topic name. The window bounds come from the alert itself.
 */
public record ReplayHint(String configPath, String inputFile, String topic) {

    /**
     * {@code oddswatch replay --config DEF --input FILE|--topic T --from T1 --to T2 --out DIR}; a
     * missing definition or input is written as a {@code <placeholder>}; arguments that need it are
     * single-quoted for a POSIX shell.
     */
    public String command(Instant from, Instant to, String outDir) {
        StringBuilder b = new StringBuilder("oddswatch replay --config ")
                .append(configPath == null ? "<definition.yaml>" : quote(configPath));
        if (inputFile != null) {
            b.append(" --input ").append(quote(inputFile));
        } else if (topic != null) {
            b.append(" --topic ").append(quote(topic));
        } else {
            b.append(" --input <events-file>");
        }
        return b.append(" --from ").append(from).append(" --to ").append(to).append(" --out ").append(quote(outDir))
                .toString();
    }

    static String quote(String arg) {
        if (!arg.isEmpty() && arg.chars().allMatch(c -> Character.isLetterOrDigit(c) || "-_./:=@+,".indexOf(c) >= 0)) {
            return arg;
        }
        return "'" + arg.replace("'", "'\\''") + "'";
    }
}
