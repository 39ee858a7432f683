package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.IOException;
import java.util.HashMap;
import java.util.Map;

/**
 * A YAML document as a Jackson tree plus the line of every key and array element, keyed by the
 * display path ({@code monitors[0].terms[2].reference}). Built by walking the YAML parser's tokens,
 * because a {@link JsonNode} does not keep locations.
 *
 * <p>Plain YAML scalars such as {@code yes}, {@code no} or {@code on} are kept as text (YAML 1.1
 * would read them as booleans), so a level called {@code yes} stays {@code "yes"}; only
 * {@code true}/{@code false} become booleans.
 */
final class LocatedTree {

    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private final String file;
    private final JsonNode root;
    private final Map<String, Integer> lines;

    private LocatedTree(String file, JsonNode root, Map<String, Integer> lines) {
        this.file = file;
        this.root = root;
        this.lines = lines;
    }

    static LocatedTree parse(String file, String text) throws DefinitionException {
        Map<String, Integer> lines = new HashMap<>();
        try (JsonParser parser = new YAMLFactory().createParser(text)) {
            JsonToken first = parser.nextToken();
            if (first == null) {
                throw new DefinitionException(file, 1, "", "the file is empty");
            }
            lines.put("", line(parser.currentTokenLocation()));
            JsonNode root = read(parser, "", lines, file);
            if (parser.nextToken() != null) {
                throw new DefinitionException(file, line(parser.currentTokenLocation()), "",
                        "a second YAML document starts here; a definition file holds exactly one");
            }
            return new LocatedTree(file, root, lines);
        } catch (JsonProcessingException e) {
            JsonLocation where = e.getLocation();
            throw new DefinitionException(file, where == null ? 0 : line(where), "",
                    "not valid YAML: " + yamlProblem(e.getOriginalMessage()));
        } catch (IOException e) {
            throw new DefinitionException(file, 0, "", "cannot read: " + e.getMessage());
        }
    }

    private static JsonNode read(JsonParser parser, String path, Map<String, Integer> lines, String file)
            throws IOException, DefinitionException {
        JsonToken token = parser.currentToken();
        switch (token) {
            case START_OBJECT: {
                ObjectNode object = NODES.objectNode();
                while (parser.nextToken() == JsonToken.FIELD_NAME) {
                    String name = parser.currentName();
                    String childPath = path.isEmpty() ? name : path + "." + name;
                    int line = line(parser.currentTokenLocation());
                    if (object.has(name)) {
                        throw new DefinitionException(file, line, childPath, "duplicate key");
                    }
                    lines.put(childPath, line);
                    parser.nextToken();
                    object.set(name, read(parser, childPath, lines, file));
                }
                return object;
            }
            case START_ARRAY: {
                ArrayNode array = NODES.arrayNode();
                int index = 0;
                while (parser.nextToken() != JsonToken.END_ARRAY) {
                    String childPath = path + "[" + index++ + "]";
                    lines.put(childPath, line(parser.currentTokenLocation()));
                    array.add(read(parser, childPath, lines, file));
                }
                return array;
            }
            case VALUE_STRING:
                return NODES.textNode(parser.getText());
            case VALUE_NUMBER_INT:
                return NODES.numberNode(parser.getBigIntegerValue());
            case VALUE_NUMBER_FLOAT:
                return NODES.numberNode(parser.getDecimalValue());
            case VALUE_TRUE:
            case VALUE_FALSE: {
                String text = parser.getText();
                boolean plain = "true".equalsIgnoreCase(text) || "false".equalsIgnoreCase(text);
                return plain ? NODES.booleanNode(token == JsonToken.VALUE_TRUE) : NODES.textNode(text);
            }
            case VALUE_NULL:
                return NODES.nullNode();
            default:
                throw new DefinitionException(file, line(parser.currentTokenLocation()), path,
                        "unsupported YAML value (a tagged or binary value); write it as plain text");
        }
    }

    /** SnakeYAML's message without its position lines and source excerpt (the line is reported anyway). */
    private static String yamlProblem(String message) {
        StringBuilder problem = new StringBuilder();
        for (String part : String.valueOf(message).split("\n")) {
            if (!part.isBlank() && !Character.isWhitespace(part.charAt(0))) {
                problem.append(problem.length() == 0 ? "" : ": ").append(part.strip());
            }
        }
        return problem.toString();
    }

    private static int line(JsonLocation location) {
        return location == null ? 0 : location.getLineNr();
    }

    String file() {
        return file;
    }

    JsonNode root() {
        return root;
    }

    /** The line of {@code path}, or of its nearest ancestor that has one. */
    int lineOf(String path) {
        String p = path;
        while (true) {
            Integer line = lines.get(p);
            if (line != null) {
                return line;
            }
            if (p.isEmpty()) {
                return 0;
            }
            int cut = Math.max(p.lastIndexOf('.'), p.lastIndexOf('['));
            p = cut < 0 ? "" : p.substring(0, cut);
        }
    }

    DefinitionException error(String path, String problem) {
        return new DefinitionException(file, lineOf(path), path, problem);
    }
}
