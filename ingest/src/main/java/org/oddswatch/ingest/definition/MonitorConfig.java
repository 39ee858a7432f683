package org.oddswatch.ingest.definition;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * A loaded definition file.
 *
 * @param file the file name as given
 * @param kafka properties passed to the Kafka clients unchanged (file, then {@code ODDSWATCH_KAFKA_*}
 *     environment variables on top), sorted by key
 * @param service live-service settings
 * @param limits record caps
 * @param monitors the monitors, in file order
 */
public record MonitorConfig(String file, Map<String, String> kafka, ServiceSettings service, RecordLimits limits,
                            List<MonitorDefinition> monitors) {

    public MonitorConfig {
        kafka = java.util.Collections.unmodifiableMap(new java.util.TreeMap<>(kafka));
        monitors = List.copyOf(monitors);
    }

    /** Input topics in order of first use. */
    public Set<String> topics() {
        Set<String> topics = new LinkedHashSet<>();
        for (MonitorDefinition monitor : monitors) {
            topics.add(monitor.topic());
        }
        return topics;
    }

    /** The monitors reading {@code topic}, in file order. */
    public List<MonitorDefinition> monitorsFor(String topic) {
        List<MonitorDefinition> list = new ArrayList<>();
        for (MonitorDefinition monitor : monitors) {
            if (monitor.topic().equals(topic)) {
                list.add(monitor);
            }
        }
        return list;
    }

    /** The monitor named {@code name}, or null. */
    public MonitorDefinition monitor(String name) {
        for (MonitorDefinition monitor : monitors) {
            if (monitor.name().equals(name)) {
                return monitor;
            }
        }
        return null;
    }
}
