package org.oddswatch.estimator;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;

/** The machine and load lines of the estimator benchmarks' reports. */
final class EstimatorBenchmarkMachine {

    private EstimatorBenchmarkMachine() {
    }

    static String loadAverage() {
        try {
            String[] parts = Files.readString(Path.of("/proc/loadavg")).trim().split("\\s+");
            return parts[0] + ", " + parts[1] + ", " + parts[2];
        } catch (IOException | RuntimeException e) {
            return "unknown";
        }
    }

    static String describe() {
        String cpu = "unknown CPU";
        try {
            cpu = Files.readAllLines(Path.of("/proc/cpuinfo")).stream().filter(l -> l.startsWith("model name"))
                    .findFirst().map(l -> l.substring(l.indexOf(':') + 1).trim()).orElse(cpu);
        } catch (IOException | RuntimeException e) {
            // keep the default
        }
        return cpu + ", " + Runtime.getRuntime().availableProcessors() + " cores, " + System.getProperty("os.name")
                + " " + System.getProperty("os.arch") + ", " + System.getProperty("java.vm.name") + " "
                + System.getProperty("java.version") + ", max heap " + Runtime.getRuntime().maxMemory() / (1 << 20)
                + " MiB; load average (1, 5, 15 min) " + loadAverage();
    }
}
