package org.oddswatch.alerts.baseline;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;

/**
 * A frozen {@link BaselineModel} as a JSON file (layout {@code oddswatch-baseline/1}):
 * <pre>
 * {"format": "oddswatch-baseline/1",
 *  "periodStart": "...", "periodEnd": "...", "events": 24000, "cases": 1210,
 *  "definitionChecksum": "...",
 *  "columns": [{"term": "intercept", ...}, {"term": "household_contact", "level": "yes", "reference": "no", ...}],
 *  "coefficients": [-3.1, 0.93, ...],
 *  "covariance": [[...], ...]}
 * </pre>
 * Reading validates the shape (one coefficient per column, a square symmetric covariance with
 * positive diagonal, finite numbers) and that the columns equal the monitor's design columns in
 * order (term, level, reference, per); any problem is a {@link BaselineFileException} naming the
 * file and the mismatch. The definition checksum is carried, not enforced: a definition may change
 * in ways that do not touch the model (window step, sinks); {@link #checksumMatches} tells.
 */
public final class BaselineFile {

    public static final String FORMAT = "oddswatch-baseline/1";

    private BaselineFile() {
    }

    /** The JSON document (without a trailing newline). */
    public static String toJson(BaselineModel model) {
        return Json.write(new Document(FORMAT, model.periodStart(), model.periodEnd(), model.events(), model.cases(),
                model.definitionChecksum(), model.columns().stream().map(ColumnEntry::of).toList(), model.coefficients(),
                model.covariance()));
    }

    /** Writes the model, replacing the file atomically where the file system allows. */
    public static void write(Path file, BaselineModel model) {
        try {
            Path parent = file.toAbsolutePath().getParent();
            if (parent != null) {
                Files.createDirectories(parent);
            }
            Path tmp = file.resolveSibling(file.getFileName() + ".tmp");
            Files.writeString(tmp, toJson(model) + "\n", StandardCharsets.UTF_8);
            try {
                Files.move(tmp, file, java.nio.file.StandardCopyOption.REPLACE_EXISTING,
                        java.nio.file.StandardCopyOption.ATOMIC_MOVE);
            } catch (java.nio.file.AtomicMoveNotSupportedException e) {
                Files.move(tmp, file, java.nio.file.StandardCopyOption.REPLACE_EXISTING);
            }
        } catch (IOException e) {
            throw new BaselineFileException(file, "cannot write: " + e.getMessage(), e);
        }
    }

    /**
     * Reads and validates a baseline file against the monitor's design columns.
     *
     * @param expectedColumns the monitor's {@code DesignCoder.columns()}, or null to skip that check
     */
    public static BaselineModel read(Path file, List<Column> expectedColumns) {
        String text;
        try {
            text = Files.readString(file, StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new BaselineFileException(file, "cannot read: " + e, e);
        }
        Document doc;
        try {
            JsonNode tree = Json.mapper().readTree(text);
            if (tree == null || !tree.isObject()) {
                throw new BaselineFileException(file, "not a JSON object");
            }
            JsonNode format = tree.get("format");
            if (format == null || !FORMAT.equals(format.asText())) {
                throw new BaselineFileException(file, "format is " + (format == null ? "missing" : "'" + format.asText()
                        + "'") + ", expected '" + FORMAT + "'");
            }
            doc = Json.mapper().treeToValue(tree, Document.class);
        } catch (JsonProcessingException e) {
            throw new BaselineFileException(file, "not valid JSON: " + e.getOriginalMessage() + " at line "
                    + (e.getLocation() == null ? "?" : e.getLocation().getLineNr()), e);
        }
        validate(file, doc);
        if (expectedColumns != null) {
            matchColumns(file, doc.designColumns(), expectedColumns);
        }
        return new BaselineModel(doc.designColumns(), doc.coefficients(), doc.covariance(), doc.periodStart(),
                doc.periodEnd(), doc.events(), doc.cases(), doc.definitionChecksum());
    }

    /** Whether the model was fitted under this definition checksum. */
    public static boolean checksumMatches(BaselineModel model, String definitionChecksum) {
        return Objects.equals(model.definitionChecksum(), definitionChecksum);
    }

    private static void validate(Path file, Document d) {
        if (d.columns() == null || d.columns().isEmpty()) {
            throw new BaselineFileException(file, "no columns");
        }
        int p = d.columns().size();
        for (int i = 0; i < p; i++) {
            if (d.columns().get(i) == null || d.columns().get(i).term() == null) {
                throw new BaselineFileException(file, "column " + i + " has no term");
            }
        }
        if (d.coefficients() == null || d.coefficients().length != p) {
            throw new BaselineFileException(file, p + " columns but " + (d.coefficients() == null ? "no"
                    : String.valueOf(d.coefficients().length)) + " coefficients");
        }
        if (d.covariance() == null || d.covariance().length != p) {
            throw new BaselineFileException(file, "covariance must be " + p + " x " + p);
        }
        for (int i = 0; i < p; i++) {
            if (!Double.isFinite(d.coefficients()[i])) {
                throw new BaselineFileException(file, "coefficient of column " + d.designColumns().get(i).label() + " is not finite");
            }
            if (d.covariance()[i] == null || d.covariance()[i].length != p) {
                throw new BaselineFileException(file, "covariance row " + i + " must have " + p + " entries");
            }
            for (int j = 0; j < p; j++) {
                double v = d.covariance()[i][j];
                if (!Double.isFinite(v)) {
                    throw new BaselineFileException(file, "covariance[" + i + "][" + j + "] is not finite");
                }
                double w = d.covariance()[j] == null || d.covariance()[j].length != p ? v : d.covariance()[j][i];
                if (Math.abs(v - w) > 1e-9 * Math.max(1.0, Math.abs(v))) {
                    throw new BaselineFileException(file, "covariance is not symmetric at [" + i + "][" + j + "]");
                }
            }
            if (!(d.covariance()[i][i] > 0) && d.coefficients()[i] != 0.0) {
                throw new BaselineFileException(file, "variance of column " + d.designColumns().get(i).label()
                        + " must be positive");
            }
        }
        if (d.events() < 0 || d.cases() < 0 || d.cases() > d.events()) {
            throw new BaselineFileException(file, "events " + d.events() + " and cases " + d.cases() + " are inconsistent");
        }
    }

    private static void matchColumns(Path file, List<Column> actual, List<Column> expected) {
        List<String> problems = new ArrayList<>();
        if (actual.size() != expected.size()) {
            problems.add("it has " + actual.size() + " columns " + labels(actual) + ", the monitor's design has "
                    + expected.size() + " " + labels(expected));
        } else {
            for (int i = 0; i < actual.size(); i++) {
                Column a = actual.get(i);
                Column e = expected.get(i);
                if (!a.term().equals(e.term()) || !Objects.equals(a.level(), e.level())
                        || !Objects.equals(a.reference(), e.reference()) || !Objects.equals(a.per(), e.per())) {
                    problems.add("column " + i + " is " + describe(a) + " in the file but " + describe(e)
                            + " in the definition");
                }
            }
        }
        if (!problems.isEmpty()) {
            throw new BaselineFileException(file, "does not match the monitor's terms: " + String.join("; ", problems)
                    + " (re-fit it with 'oddswatch baseline' under the current definition)");
        }
    }

    private static String labels(List<Column> columns) {
        return columns.stream().map(Column::label).toList().toString();
    }

    private static String describe(Column c) {
        return c.label() + (c.reference() != null ? " (reference " + c.reference() + ")" : "")
                + (c.per() != null ? " (per " + c.per() + ")" : "");
    }

    /** The file layout. */
    record Document(String format, String periodStart, String periodEnd, long events, long cases,
                    String definitionChecksum, List<ColumnEntry> columns, double[] coefficients, double[][] covariance) {
        List<Column> designColumns() {
            return columns.stream().map(ColumnEntry::toColumn).toList();
        }
    }

    /** One design column in the file. */
    record ColumnEntry(String term, String level, String reference, Double per, boolean watched, boolean indicator) {
        static ColumnEntry of(Column c) {
            return new ColumnEntry(c.term(), c.level(), c.reference(), c.per(), c.watched(), c.indicator());
        }

        Column toColumn() {
            if (term == null) {
                throw new IllegalArgumentException("a column has no term");
            }
            return new Column(term, level, reference, per, watched, indicator);
        }
    }
}
