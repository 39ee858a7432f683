package org.oddswatch.ingest.definition;

import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.CharBuffer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;

/**
 * Loads and validates a monitor definition file (YAML; keys and defaults in the module README). Every
 * problem is a {@link DefinitionException} naming file, line and key; unknown keys are errors, so a
 * misspelt key never falls back to a default silently.
 */
public final class DefinitionLoader {

    /** Environment variables with this prefix add or override Kafka client properties. */
    public static final String KAFKA_ENV_PREFIX = "ODDSWATCH_KAFKA_";
    /** The largest definition file read: 1 MiB. */
    private static final long MAX_FILE_BYTES = 1 << 20;

    private DefinitionLoader() {
    }

    /** Loads {@code path}, with Kafka overrides from the process environment. */
    public static MonitorConfig load(Path path) throws DefinitionException {
        return load(path, System.getenv());
    }

    public static MonitorConfig load(Path path, Map<String, String> environment) throws DefinitionException {
        String name = path.toString();
        byte[] bytes;
        try {
            if (Files.size(path) > MAX_FILE_BYTES) {
                throw new DefinitionException(name, 0, "", "the definition file is larger than " + MAX_FILE_BYTES
                        + " bytes");
            }
            bytes = Files.readAllBytes(path);
        } catch (IOException e) {
            throw new DefinitionException(name, 0, "", "cannot read the definition file (" + e.getMessage() + ")");
        }
        return parse(name, utf8(name, bytes), environment, path.toAbsolutePath().getParent());
    }

    /** The file's text; ill-formed UTF-8 is an error naming the line and column of the first bad byte. */
    private static String utf8(String name, byte[] bytes) throws DefinitionException {
        ByteBuffer in = ByteBuffer.wrap(bytes); // the JDK's decoder reports malformed input by default
        if (!StandardCharsets.UTF_8.newDecoder().decode(in, CharBuffer.allocate(bytes.length), true).isError()) {
            return new String(bytes, StandardCharsets.UTF_8);
        }
        int bad = in.position();
        int line = 1;
        int lineStart = 0;
        for (int i = 0; i < bad; i++) {
            line += bytes[i] == '\n' ? 1 : 0;
            lineStart = bytes[i] == '\n' ? i + 1 : lineStart;
        }
        String at = "byte 0x" + Integer.toHexString(bytes[bad] & 0xFF) + " at column " + (bad - lineStart + 1);
        throw new DefinitionException(name, line, "", "not valid UTF-8 (" + at + "); save the definition as UTF-8");
    }

    /**
     * Parses definition text.
     *
     * @param file the file name used in messages
     * @param definitionDir where relative baseline files are looked up, or null for the working directory
     */
    public static MonitorConfig parse(String file, String text, Map<String, String> environment, Path definitionDir)
            throws DefinitionException {
        DefNode root = DefNode.parse(file, text).mapping("kafka", "service", "limits", "monitors");
        Map<String, String> kafka = kafkaProperties(root.get("kafka"), environment);
        ServiceSettings service = service(root.get("service"));
        RecordLimits limits = RecordLimits.defaults();
        DefNode limitsNode = root.get("limits");
        if (limitsNode.present()) {
            limitsNode.mapping("maxRecordBytes", "maxDepth");
            limits = new RecordLimits(
                    limitsNode.get("maxRecordBytes").integer(limits.maxRecordBytes(), v -> v >= 16,
                            "must be at least 16"),
                    limitsNode.get("maxDepth").integer(limits.maxDepth(), v -> v >= 1, "must be at least 1"));
        }
        DefNode monitorsNode = root.require("monitors");
        monitorsNode.errorIf(monitorsNode.elements().isEmpty(), "at least one monitor is needed");
        List<MonitorDefinition> monitors = new ArrayList<>();
        Set<String> names = new HashSet<>();
        for (DefNode element : monitorsNode.elements()) {
            MonitorDefinition monitor = MonitorReader.read(element, definitionDir);
            element.get("name").errorIf(!names.add(monitor.name()),
                    "monitor name '" + monitor.name() + "' is used twice");
            monitors.add(monitor);
        }
        return new MonitorConfig(file, kafka, service, limits, monitors);
    }

    /**
     * Kafka properties: the {@code kafka} mapping (nested mappings joined with dots, lists with commas),
     * then every {@code ODDSWATCH_KAFKA_SOME_KEY} variable as {@code some.key}.
     */
    private static Map<String, String> kafkaProperties(DefNode node, Map<String, String> environment)
            throws DefinitionException {
        Map<String, String> properties = new TreeMap<>();
        if (node.present()) {
            node.errorIf(!node.json().isObject(), "expected a mapping of Kafka client properties");
            flatten(node, "", properties);
        }
        new TreeMap<>(environment).forEach((key, value) -> { // sorted: the same winner every time
            if (key.startsWith(KAFKA_ENV_PREFIX) && key.length() > KAFKA_ENV_PREFIX.length()) {
                String property = key.substring(KAFKA_ENV_PREFIX.length()).toLowerCase(Locale.ROOT);
                properties.put(property.replace('_', '.'), value);
            }
        });
        return properties;
    }

    private static void flatten(DefNode node, String prefix, Map<String, String> into) throws DefinitionException {
        for (String name : (Iterable<String>) node.json()::fieldNames) {
            DefNode child = node.get(name);
            if (child.json().isObject()) {
                flatten(child, prefix + name + ".", into);
            } else if (child.json().isArray()) {
                into.put(prefix + name, String.join(",", child.texts()));
            } else if (!child.json().isNull()) {
                into.put(prefix + name, child.text());
            }
        }
    }

    private static ServiceSettings service(DefNode node) throws DefinitionException {
        ServiceSettings defaults = ServiceSettings.defaults();
        if (!node.present()) {
            return defaults;
        }
        node.mapping("http", "groupId", "refresh", "idleTimeout", "rebuildMargin");
        DefNode http = node.get("http");
        String address = http.text(defaults.http());
        String port = address.substring(address.lastIndexOf(':') + 1);
        http.errorIf(address.lastIndexOf(':') <= 0 || !port.matches("[0-9]{1,5}") || Integer.parseInt(port) > 65535,
                "'" + address + "' is not host:port (for example 127.0.0.1:8470)");
        return new ServiceSettings(address, node.get("groupId").text(defaults.groupId()),
                node.get("refresh").duration(defaults.refresh(), false),
                node.get("idleTimeout").duration(defaults.idleTimeout(), false),
                node.get("rebuildMargin").duration(defaults.rebuildMargin(), true));
    }
}
