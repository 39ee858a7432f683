package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.SerializableString;
import com.fasterxml.jackson.core.io.CharacterEscapes;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectWriter;
import java.io.UncheckedIOException;
import org.oddswatch.alerts.json.Json;

/**
 * JSON that can sit inside an HTML {@code <script>} element: written by the project's Jackson mapper
 * with {@code <}, {@code >} and {@code &} as {@code \u003c}, {@code \u003e}, {@code \u0026}
 * (so no text can close the element or open a comment) and the line separators U+2028 and U+2029
 * escaped as well. The escapes are ordinary JSON escapes: {@code JSON.parse} gives the original text.
 */
final class ScriptSafeJson {

    private static final ObjectWriter WRITER = Json.mapper().writer().with(new HtmlEscapes());

    private ScriptSafeJson() {
    }

    static String write(JsonNode value) {
        try {
            return WRITER.writeValueAsString(value);
        } catch (JsonProcessingException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static final class HtmlEscapes extends CharacterEscapes {
        private static final long serialVersionUID = 1L;
        private final int[] table;

        HtmlEscapes() {
            table = standardAsciiEscapesForJSON();
            table['<'] = ESCAPE_STANDARD;
            table['>'] = ESCAPE_STANDARD;
            table['&'] = ESCAPE_STANDARD;
        }

        @Override
        public int[] getEscapeCodesForAscii() {
            return table;
        }

        @Override
        public SerializableString getEscapeSequence(int ch) {
            if (ch == 0x2028 || ch == 0x2029) {
                return new com.fasterxml.jackson.core.io.SerializedString(String.format("\\u%04x", ch));
            }
            return null;
        }
    }
}
