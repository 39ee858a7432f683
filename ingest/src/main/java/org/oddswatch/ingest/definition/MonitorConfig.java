package org.oddswatch.ingest.definition;

import java.util.Collections;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.stream.Collectors;

/**
 * A loaded definition file.
 *
 * @param file the file name as given
 * @param kafka properties passed to the Kafka clients unchanged (file, then {@code ODDSWATCH_KAFKA_*}
 *     environment variables on top), sorted by key
 * @param monitors the monitors, in file order
 */
public record MonitorConfig(String file, Map<String, String> kafka, ServiceSettings service, RecordLimits limits,
                            List<MonitorDefinition> monitors) {

    public MonitorConfig {
        kafka = Collections.unmodifiableMap(new TreeMap<>(kafka));
        monitors = List.copyOf(monitors);
    }

    /** Input topics in order of first use. */
    public Set<String> topics() {
        return monitors.stream().map(MonitorDefinition::topic).collect(Collectors.toCollection(LinkedHashSet::new));
    }

    /** The monitors reading {@code topic}, in file order. */
    public List<MonitorDefinition> monitorsFor(String topic) {
        return monitors.stream().filter(monitor -> monitor.topic().equals(topic)).toList();
    }

    /** The monitor named {@code name}, or null. */
    public MonitorDefinition monitor(String name) {
        return monitors.stream().filter(monitor -> monitor.name().equals(name)).findFirst().orElse(null);
    }
}
