package org.oddswatch.deploy.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.MappingIterator;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import com.fasterxml.jackson.dataformat.csv.CsvSchema;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.reference.ReferenceTools;

/**
 * {@code estimates.csv} of a replay against its {@code estimates.jsonl}: one row per window and
 * coefficient, the window's values repeated, every value equal to the JSON's, withheld cells blank;
 * read back by Jackson's CSV parser and by Python's {@code csv} module.
 */
class ReplayEstimatesCsvTest {

    private static final Path EXAMPLE = Path.of("examples/respiratory.yaml");

    /** The documented columns and where each comes from in the estimate JSON ("@" = inside a coefficient). */
    private static final Map<String, String> COLUMNS = new LinkedHashMap<>();

    static {
        String[] pairs = {
            "monitor", "", "stream", "/stream", "window_start", "/windowStart", "window_end", "/windowEnd",
            "events", "/events", "positives", "/cases", "prevalence", "/prevalence/value",
            "prevalence_low", "/prevalence/lower", "prevalence_high", "/prevalence/upper",
            "prevalence_method", "/prevalence/method", "adjusted_prevalence", "/prevalence/adjusted/value",
            "adjusted_low", "/prevalence/adjusted/lower", "adjusted_high", "/prevalence/adjusted/upper",
            "fit_state", "/fit/state", "fit_method", "/fit/method", "fit_events", "/fit/events",
            "term", "@term", "level", "@level", "reference", "@reference", "per", "@per", "coefficient", "@coef",
            "std_error", "@se", "z", "@z", "p_value", "@p", "odds_ratio", "@oddsRatio", "or_low", "@lower",
            "or_high", "@upper", "interval_kind", "@interval", "profile_low", "@profileLower",
            "profile_high", "@profileUpper", "lr_chi_square", "@lrChiSquare", "lr_df", "@lrDf", "lr_p", "@lrP",
            "withheld", ""};
        for (int i = 0; i < pairs.length; i += 2) {
            COLUMNS.put(pairs[i], pairs[i + 1]);
        }
    }

    @TempDir
    static Path dir;

    static Path replay;

    @BeforeAll
    static void replayASmallSimulatedFile() {
        // 40 events a week: the split monitor's regional streams have windows with fewer than 5 positives
        Path events = dir.resolve("events.jsonl");
        assertEquals(0, CommandLineTest.run("simulate", "--rate", "40", "--duration", "14w", "--out",
                events.toString()).status());
        replay = dir.resolve("replay");
        CommandLineTest.Result r = CommandLineTest.run("replay", "--config", EXAMPLE.toString(), "--input",
                events.toString(), "--out", replay.toString());
        assertEquals(0, r.status(), r.err());
    }

    private static List<Map<String, String>> csvRows() throws IOException {
        CsvMapper mapper = new CsvMapper();
        try (MappingIterator<Map<String, String>> it = mapper.readerFor(Map.class)
                .with(CsvSchema.emptySchema().withHeader()).readValues(replay.resolve("estimates.csv").toFile())) {
            return it.readAll();
        }
    }

    private static List<String> header() throws IOException {
        try (MappingIterator<String[]> it = new CsvMapper().enable(CsvParser.Feature.WRAP_AS_ARRAY)
                .readerFor(String[].class).readValues(replay.resolve("estimates.csv").toFile())) {
            return List.of(it.next());
        }
    }

    private static List<JsonNode> estimates() throws IOException {
        List<JsonNode> lines = new ArrayList<>();
        for (String line : Files.readAllLines(replay.resolve("estimates.jsonl"), StandardCharsets.UTF_8)) {
            lines.add(Json.mapper().readTree(line));
        }
        return lines;
    }

    /** The row the CSV must hold for one window and one coefficient (missing: a window without any). */
    private static Map<String, JsonNode> expected(JsonNode window, JsonNode coefficient) {
        Map<String, JsonNode> row = new LinkedHashMap<>();
        COLUMNS.forEach((column, pointer) -> {
            if (!pointer.isEmpty()) {
                row.put(column, pointer.startsWith("@") ? coefficient.path(pointer.substring(1)) : window.at(pointer));
            }
        });
        return row;
    }

    private static void assertCell(JsonNode json, String cell, String where) {
        if (json.isMissingNode() || json.isNull()) {
            assertEquals("", cell, where + " is blank where the JSON has no value");
        } else if (json.isNumber()) {
            assertEquals(json.doubleValue(), Double.parseDouble(cell), 0.0, where);
        } else {
            assertEquals(json.asText(), cell, where);
        }
    }

    @Test
    void everyCoefficientOfEveryWindowIsARowWithTheJsonValues() throws IOException {
        assertEquals(List.copyOf(COLUMNS.keySet()), header());
        List<Map<String, String>> rows = csvRows();
        List<JsonNode> windows = estimates();
        int next = 0;
        int coefficients = 0;
        for (JsonNode window : windows) {
            List<JsonNode> each = new ArrayList<>();
            window.path("coefficients").forEach(each::add);
            if (each.isEmpty()) {
                each.add(com.fasterxml.jackson.databind.node.MissingNode.getInstance());
            }
            List<String> withheld = new ArrayList<>();
            window.path("withheld").forEach(w -> withheld.add(w.path("field").asText()));
            for (JsonNode coefficient : each) {
                Map<String, String> row = rows.get(next);
                String where = "row " + (next + 1) + " (" + window.path("stream").asText() + " "
                        + window.path("windowEnd").asText() + ")";
                expected(window, coefficient).forEach((column, json) -> assertCell(json, row.get(column),
                        where + " " + column));
                String stream = window.path("stream").asText();
                assertEquals(stream.contains("/") ? stream.substring(0, stream.indexOf('/')) : stream,
                        row.get("monitor"), where);
                assertEquals(String.join(";", withheld), row.get("withheld"), where);
                coefficients += coefficient.isMissingNode() ? 0 : 1;
                next++;
            }
        }
        assertEquals(rows.size(), next, "no row beyond the estimates");
        assertTrue(coefficients > 0, "windows with coefficients");
        assertEquals(coefficients, rows.stream().filter(r -> !r.get("term").isEmpty()).count());
        assertTrue(rows.stream().anyMatch(r -> "intercept".equals(r.get("term"))), "the intercept has its rows");
    }

    @Test
    void aWithheldWindowHasBlankCellsWhereTheJsonHasNone() throws IOException {
        List<Map<String, String>> withheld = csvRows().stream()
                .filter(r -> r.get("withheld").contains("cases")).toList();
        assertTrue(!withheld.isEmpty(), "the small regional windows withhold their positives");
        for (Map<String, String> row : withheld) {
            assertEquals("", row.get("positives"));
            assertEquals("", row.get("prevalence"));
            assertEquals("", row.get("odds_ratio"));
            assertEquals("", row.get("term"));
            assertTrue(!row.get("events").isEmpty(), "the events of a window with few positives stay shown");
        }
    }

    @Test
    void pythonsCsvModuleReadsTheSameValuesAsItsJsonModule() throws Exception {
        // Source: Python's own csv and json modules (an outside reader), row by row against estimates.jsonl
        Path python = ReferenceTools.python("csv", "json");
        Path script = dir.resolve("check_csv.py");
        Files.writeString(script, String.join("\n",
                "import csv, json, sys",
                "folder = sys.argv[1]",
                "coef = {'term': 'term', 'level': 'level', 'coefficient': 'coef', 'std_error': 'se',",
                "        'p_value': 'p', 'odds_ratio': 'oddsRatio', 'or_low': 'lower', 'or_high': 'upper'}",
                "win = {'stream': ('stream',), 'window_end': ('windowEnd',), 'events': ('events',),",
                "       'positives': ('cases',), 'prevalence': ('prevalence', 'value'),",
                "       'prevalence_low': ('prevalence', 'lower'), 'fit_state': ('fit', 'state')}",
                "def same(value, cell):",
                "    if value is None: return cell == ''",
                "    if isinstance(value, (int, float)): return cell != '' and float(cell) == float(value)",
                "    return cell == str(value)",
                "def at(obj, path):",
                "    for key in path:",
                "        obj = obj.get(key) if isinstance(obj, dict) else None",
                "    return obj",
                "rows = list(csv.DictReader(open(folder + '/estimates.csv', newline='', encoding='utf-8')))",
                "i = 0",
                "for line in open(folder + '/estimates.jsonl', encoding='utf-8'):",
                "    e = json.loads(line)",
                "    for c in e.get('coefficients') or [{}]:",
                "        r = rows[i]; i += 1",
                "        for col, path in win.items():",
                "            assert same(at(e, path), r[col]), (i, col, at(e, path), r[col])",
                "        for col, key in coef.items():",
                "            assert same(c.get(key), r[col]), (i, col, c.get(key), r[col])",
                "assert i == len(rows), (i, len(rows))",
                "print('rows', i)", ""));
        Process p = new ProcessBuilder(python.toString(), script.toString(), replay.toString())
                .redirectErrorStream(true).start();
        String output = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(60, TimeUnit.SECONDS), "python finished");
        assertEquals(0, p.exitValue(), output);
        assertEquals("rows " + csvRows().size(), output.strip());
    }
}
