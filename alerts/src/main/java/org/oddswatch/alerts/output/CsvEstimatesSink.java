package org.oddswatch.alerts.output;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.SequenceWriter;
import com.fasterxml.jackson.databind.node.MissingNode;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvSchema;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * A replay's {@code estimates.csv}: the final window estimates of {@code estimates.jsonl} as a table
 * for spreadsheets, R and Python. One row per window and coefficient (the intercept included), the
 * window's columns repeated on each; a window without coefficients (no model, or coefficients
 * withheld) has one row with the coefficient columns blank. Rows are made from the published JSON,
 * so every value is the JSON's text and a withheld figure is a blank cell, as it is absent there;
 * {@code withheld} names the window's withheld JSON fields. Columns: {@link #COLUMNS}, explained in
 * the ingest README. Jackson's CSV writer quotes; lines end in LF; the same estimates give the same
 * bytes. An I/O error ends the replay ({@link UncheckedIOException}).
 */
public final class CsvEstimatesSink implements OutputSink {

    /** The header, in order. */
    public static final List<String> COLUMNS = List.of("monitor", "stream", "window_start", "window_end", "events",
            "positives", "prevalence", "prevalence_low", "prevalence_high", "prevalence_method", "adjusted_prevalence",
            "adjusted_low", "adjusted_high", "fit_state", "fit_method", "fit_events", "term", "level", "reference",
            "per", "coefficient", "std_error", "z", "p_value", "odds_ratio", "or_low", "or_high", "interval_kind",
            "profile_low", "profile_high", "lr_chi_square", "lr_df", "lr_p", "withheld");

    /** JSON Pointers of the window's columns, {@code monitor} to {@code fit_events}, after {@code monitor}. */
    private static final List<String> WINDOW = List.of("/stream", "/windowStart", "/windowEnd", "/events", "/cases",
            "/prevalence/value", "/prevalence/lower", "/prevalence/upper", "/prevalence/method",
            "/prevalence/adjusted/value", "/prevalence/adjusted/lower", "/prevalence/adjusted/upper", "/fit/state",
            "/fit/method", "/fit/events");

    /** Fields of one coefficient, {@code term} to {@code lr_p}. */
    private static final List<String> COEFFICIENT = List.of("term", "level", "reference", "per", "coef", "se", "z",
            "p", "oddsRatio", "lower", "upper", "interval", "profileLower", "profileUpper", "lrChiSquare", "lrDf",
            "lrP");

    private final SequenceWriter rows;

    /** Creates (or empties) {@code file} and writes the header. */
    public CsvEstimatesSink(Path file) throws IOException {
        CsvSchema schema = CsvSchema.builder().addColumns(COLUMNS, CsvSchema.ColumnType.STRING).build().withHeader();
        rows = new CsvMapper().writer(schema).writeValues(Files.newBufferedWriter(file, StandardCharsets.UTF_8));
    }

    @Override
    public void estimate(WindowEstimate estimate, Published published) {
        if (estimate.status() != WindowStatus.FINAL) {
            return;
        }
        try {
            JsonNode window = Json.mapper().readTree(published.json());
            List<String> shared = new ArrayList<>(COLUMNS.size());
            shared.add(published.monitor());
            WINDOW.forEach(pointer -> shared.add(text(window.at(pointer))));
            List<String> withheld = new ArrayList<>();
            window.path("withheld").forEach(w -> withheld.add(w.path("field").asText()));
            JsonNode coefficients = window.path("coefficients");
            if (coefficients.isEmpty()) {
                row(shared, MissingNode.getInstance(), withheld);
            }
            for (JsonNode coefficient : coefficients) {
                row(shared, coefficient, withheld);
            }
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private void row(List<String> shared, JsonNode coefficient, List<String> withheld) throws IOException {
        List<String> row = new ArrayList<>(shared);
        COEFFICIENT.forEach(field -> row.add(text(coefficient.path(field))));
        row.add(withheld.isEmpty() ? null : String.join(";", withheld));
        rows.write(row);
    }

    /** The JSON value's text; null (a blank cell) for an absent or null value. */
    private static String text(JsonNode value) {
        return value == null || value.isMissingNode() || value.isNull() ? null : value.asText();
    }

    @Override
    public void close() {
        try {
            rows.close();
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
