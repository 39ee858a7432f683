package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;

/**
 * Loads and validates a monitor definition file (YAML). Every problem is reported as a
 * {@link DefinitionException} naming the file, the line and the key. Unknown keys are errors, so a
 * misspelt key never silently falls back to a default.
 */
public final class DefinitionLoader {

    /** Environment variables with this prefix add or override Kafka client properties. */
    public static final String KAFKA_ENV_PREFIX = "ODDSWATCH_KAFKA_";

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
        String text = utf8(name, bytes);
        Path dir = path.toAbsolutePath().getParent();
        return parse(name, text, environment, dir);
    }

    /** The largest definition file read: 1 MiB. */
    static final long MAX_FILE_BYTES = 1 << 20;

    /** The file's text; ill-formed UTF-8 is an error naming the line and column of the first bad byte. */
    private static String utf8(String name, byte[] bytes) throws DefinitionException {
        int bad = org.oddswatch.ingest.decode.Unicode.firstInvalidUtf8(bytes, 0, bytes.length);
        if (bad < 0) {
            return new String(bytes, StandardCharsets.UTF_8);
        }
        int line = 1;
        int lineStart = 0;
        for (int i = 0; i < bad; i++) {
            if (bytes[i] == '\n') {
                line++;
                lineStart = i + 1;
            }
        }
        throw new DefinitionException(name, line, "", "not valid UTF-8 (byte 0x"
                + Integer.toHexString(bytes[bad] & 0xFF) + " at column " + (bad - lineStart + 1)
                + "); save the definition as UTF-8");
    }

    /**
     * Parses definition text.
     *
     * @param file the file name used in messages
     * @param definitionDir where relative baseline files are looked up, or null for the working directory
     */
    public static MonitorConfig parse(String file, String text, Map<String, String> environment, Path definitionDir)
            throws DefinitionException {
        LocatedTree tree = LocatedTree.parse(file, text);
        DefNode root = DefNode.root(tree).mapping("kafka", "service", "limits", "monitors");
        Map<String, String> kafka = kafkaProperties(root.get("kafka"), environment);
        ServiceSettings service = service(root.get("service"));
        RecordLimits limits = limits(root.get("limits"));
        DefNode monitorsNode = root.require("monitors");
        List<DefNode> elements = monitorsNode.elements();
        if (elements.isEmpty()) {
            throw monitorsNode.error("at least one monitor is needed");
        }
        List<MonitorDefinition> monitors = new ArrayList<>();
        Set<String> names = new HashSet<>();
        for (DefNode element : elements) {
            MonitorDefinition monitor = new MonitorReader(element, definitionDir).read();
            if (!names.add(monitor.name())) {
                throw element.get("name").error("monitor name '" + monitor.name() + "' is used twice");
            }
            monitors.add(monitor);
        }
        return new MonitorConfig(file, kafka, service, limits, monitors);
    }

    /**
     * Kafka properties: the {@code kafka} mapping (nested mappings are joined with dots), then every
     * {@code ODDSWATCH_KAFKA_SOME_KEY} variable as {@code some.key}.
     */
    static Map<String, String> kafkaProperties(DefNode node, Map<String, String> environment)
            throws DefinitionException {
        Map<String, String> properties = new TreeMap<>();
        if (node.present()) {
            if (!node.json().isObject()) {
                throw node.error("expected a mapping of Kafka client properties");
            }
            flatten(node, "", properties);
        }
        for (Map.Entry<String, String> variable : new TreeMap<>(environment).entrySet()) {
            String key = variable.getKey();
            if (key.startsWith(KAFKA_ENV_PREFIX) && key.length() > KAFKA_ENV_PREFIX.length()) {
                String property = key.substring(KAFKA_ENV_PREFIX.length()).toLowerCase(Locale.ROOT).replace('_', '.');
                properties.put(property, variable.getValue());
            }
        }
        return properties;
    }

    private static void flatten(DefNode node, String prefix, Map<String, String> into) throws DefinitionException {
        Iterator<String> names = node.json().fieldNames();
        while (names.hasNext()) {
            String name = names.next();
            DefNode child = node.get(name);
            JsonNode json = child.json();
            if (json.isObject()) {
                flatten(child, prefix + name + ".", into);
            } else if (json.isArray()) {
                List<String> parts = child.texts();
                into.put(prefix + name, String.join(",", parts));
            } else if (!json.isNull()) {
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
        int colon = address.lastIndexOf(':');
        if (colon <= 0 || colon == address.length() - 1 || !address.substring(colon + 1).chars().allMatch(Character::isDigit)
                || Integer.parseInt(address.substring(colon + 1)) > 65535) {
            throw http.error("'" + address + "' is not host:port (for example 127.0.0.1:8470)");
        }
        return new ServiceSettings(address, node.get("groupId").text(defaults.groupId()),
                positive(node.get("refresh"), defaults.refresh()),
                positive(node.get("idleTimeout"), defaults.idleTimeout()),
                notNegative(node.get("rebuildMargin"), defaults.rebuildMargin()));
    }

    private static RecordLimits limits(DefNode node) throws DefinitionException {
        RecordLimits defaults = RecordLimits.defaults();
        if (!node.present()) {
            return defaults;
        }
        node.mapping("maxRecordBytes", "maxDepth");
        int bytes = node.get("maxRecordBytes").integer(defaults.maxRecordBytes());
        if (bytes < 16) {
            throw node.get("maxRecordBytes").error("must be at least 16");
        }
        int depth = node.get("maxDepth").integer(defaults.maxDepth());
        if (depth < 1) {
            throw node.get("maxDepth").error("must be at least 1");
        }
        return new RecordLimits(bytes, depth);
    }

    static java.time.Duration positive(DefNode node, java.time.Duration fallback) throws DefinitionException {
        java.time.Duration value = node.duration(fallback);
        if (value.isNegative() || value.isZero()) {
            throw node.error("must be a positive duration");
        }
        return value;
    }

    static java.time.Duration notNegative(DefNode node, java.time.Duration fallback) throws DefinitionException {
        java.time.Duration value = node.duration(fallback);
        if (value.isNegative()) {
            throw node.error("must not be negative");
        }
        return value;
    }
}
