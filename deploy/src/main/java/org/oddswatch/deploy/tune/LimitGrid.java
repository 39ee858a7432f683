package org.oddswatch.deploy.tune;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.io.IOException;
import java.math.BigDecimal;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.regex.Pattern;

/**
 * A grid over named rule limits: each {@code --try} names a key under a monitor's {@code rules}
 * section, dotted ({@code oddsRatioDrift.limit}), and its values ({@code 2.5,3,3.5}); the grid is
 * every combination, the first key varying slowest. A setting is the definition text with those
 * keys set in every monitor's {@code rules}.
 */
public final class LimitGrid {

    private static final Pattern KEY = Pattern.compile("[A-Za-z][A-Za-z0-9]*(\\.[A-Za-z][A-Za-z0-9]*)*");

    private final Map<String, List<String>> axes = new LinkedHashMap<>();

    /**
     * @param tries each {@code KEY=V1,V2,...}
     * @throws IllegalArgumentException for a malformed one (the message names it)
     */
    public LimitGrid(List<String> tries) {
        for (String t : tries) {
            int eq = t.indexOf('=');
            String key = eq < 0 ? "" : t.substring(0, eq).trim();
            if (!KEY.matcher(key).matches() || t.substring(eq + 1).isBlank()) {
                throw new IllegalArgumentException("--try '" + t + "': write RULE.KEY=VALUE[,VALUE...], "
                        + "for example oddsRatioDrift.limit=2.5,3");
            }
            List<String> values = new ArrayList<>();
            for (String v : t.substring(eq + 1).split(",", -1)) {
                if (v.isBlank()) {
                    throw new IllegalArgumentException("--try '" + t + "': an empty value");
                }
                values.add(v.trim());
            }
            if (axes.put(key, values) != null) {
                throw new IllegalArgumentException("--try names " + key + " twice");
            }
        }
    }

    /** Every combination, each as key to value in the order the keys were given. */
    public List<Map<String, String>> settings() {
        List<Map<String, String>> out = new ArrayList<>();
        out.add(new LinkedHashMap<>());
        for (Map.Entry<String, List<String>> axis : axes.entrySet()) {
            List<Map<String, String>> next = new ArrayList<>();
            for (Map<String, String> partial : out) {
                for (String value : axis.getValue()) {
                    Map<String, String> s = new LinkedHashMap<>(partial);
                    s.put(axis.getKey(), value);
                    next.add(s);
                }
            }
            out = next;
        }
        return axes.isEmpty() ? List.of() : out;
    }

    /**
     * The definition text with {@code setting} applied to every monitor's {@code rules} (missing
     * sections are added; a number is written as a number, anything else as text). Comments are
     * not kept.
     *
     * @throws IOException when {@code definition} is not YAML
     */
    public static String apply(String definition, Map<String, String> setting) throws IOException {
        YAMLMapper yaml = new YAMLMapper();
        JsonNode root = yaml.readTree(definition);
        for (JsonNode monitor : root.path("monitors")) {
            if (!monitor.isObject()) {
                continue;
            }
            for (Map.Entry<String, String> e : setting.entrySet()) {
                ObjectNode node = ((ObjectNode) monitor).withObjectProperty("rules");
                String[] parts = e.getKey().split("\\.");
                for (int i = 0; i < parts.length - 1; i++) {
                    node = node.withObjectProperty(parts[i]);
                }
                String last = parts[parts.length - 1];
                try {
                    node.put(last, new BigDecimal(e.getValue()));
                } catch (NumberFormatException notNumber) {
                    node.put(last, e.getValue());
                }
            }
        }
        return yaml.writeValueAsString(root);
    }
}
