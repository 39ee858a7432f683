package org.oddswatch.alerts.output;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.MappingIterator;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.alerts.privacy.PublishedEstimate;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.result.PrevalenceEstimate;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/** {@link CsvEstimatesSink}: rows per coefficient, the JSON's text, quoting, withheld cells; and {@link OutputSink#all}. */
class CsvEstimatesSinkTest {

    @TempDir
    Path dir;

    private static WindowEstimate with(WindowEstimate w, String stream, WindowStatus status, long cases) {
        return new WindowEstimate(stream, w.windowStart(), w.windowEnd(), status, w.events(), cases,
                new PrevalenceEstimate((double) cases / w.events(), 0.001, 0.01, "wilson", null), List.of(), w.fit(),
                w.coefficients(), null, List.of());
    }

    private List<String[]> write(WindowEstimate... estimates) throws IOException {
        Path file = dir.resolve("estimates.csv");
        try (CsvEstimatesSink sink = new CsvEstimatesSink(file)) {
            for (WindowEstimate e : estimates) {
                sink.estimate(e, new Published("resp", "key", PublishedEstimate.json(e, SmallCellPolicy.DEFAULT)));
            }
        }
        try (MappingIterator<String[]> it = new CsvMapper().enable(CsvParser.Feature.WRAP_AS_ARRAY)
                .readerFor(String[].class).readValues(file.toFile())) {
            return it.readAll();
        }
    }

    private static String cell(List<String[]> rows, int row, String column) {
        return rows.get(row)[CsvEstimatesSink.COLUMNS.indexOf(column)];
    }

    @Test
    void aFinalWindowIsOneRowPerCoefficientWithItsWindowColumnsRepeated() throws IOException {
        // a split value with a comma and a quote: Source: RFC 4180, section 2 (fields with commas or quotes are
        // enclosed in double quotes, an inner quote doubled); the parser must give the value back whole
        String stream = "resp/\"north, upper\"";
        WindowEstimate e = with(Fixtures.window(0, Math.log(2.0), 0.2), stream, WindowStatus.FINAL, 101);
        List<String[]> rows = write(e, with(e, stream, WindowStatus.INTERIM, 101));
        assertEquals(CsvEstimatesSink.COLUMNS, List.of(rows.get(0)));
        assertEquals(4, rows.size(), "header and three coefficients; the interim estimate is not written");
        List<String> terms = new ArrayList<>();
        for (int r = 1; r < rows.size(); r++) {
            assertEquals(stream, cell(rows, r, "stream"));
            assertEquals("resp", cell(rows, r, "monitor"));
            assertEquals("2010", cell(rows, r, "events"));
            assertEquals("101", cell(rows, r, "positives"));
            assertEquals(String.valueOf(101 / 2010.0), cell(rows, r, "prevalence"));
            assertEquals("converged", cell(rows, r, "fit_state"));
            assertEquals("", cell(rows, r, "withheld"));
            terms.add(cell(rows, r, "term"));
        }
        assertEquals(List.of("intercept", "household_contact", "age_years"), terms);
        assertEquals("", cell(rows, 1, "odds_ratio"), "no odds ratio for the intercept");
        assertEquals(2.0, Double.parseDouble(cell(rows, 2, "odds_ratio")), 1e-12, "exp(log 2)");
        assertEquals(String.valueOf(Math.log(2.0)), cell(rows, 2, "coefficient"));
        assertEquals("yes", cell(rows, 2, "level"));
        assertEquals("no", cell(rows, 2, "reference"));
        assertEquals("12.0", cell(rows, 2, "lr_chi_square"));
        assertEquals("10.0", cell(rows, 3, "per"));
        assertTrue(Files.readString(dir.resolve("estimates.csv"), StandardCharsets.UTF_8)
                .contains("\"resp/\"\"north, upper\"\"\""), "quoted, inner quotes doubled");
    }

    @Test
    void aWindowWithFewPositivesIsOneRowWithTheWithheldCellsBlank() throws IOException {
        WindowEstimate e = with(Fixtures.window(0, 0.5, 0.2), "resp", WindowStatus.FINAL, 3);
        List<String[]> rows = write(e);
        assertEquals(2, rows.size(), "the coefficients are withheld: one row for the window");
        assertEquals("2010", cell(rows, 1, "events"));
        for (String column : List.of("positives", "prevalence", "prevalence_low", "term", "coefficient", "odds_ratio")) {
            assertEquals("", cell(rows, 1, column), column);
        }
        assertEquals("cases;prevalence;coefficients;notes;fit.logLikelihood;fit.nullLogLikelihood",
                cell(rows, 1, "withheld"));
    }

    @Test
    void allHandsEachOutputToEverySinkAndClosesThemAllBeforeThrowing() {
        List<String> seen = new ArrayList<>();
        OutputSink failing = new OutputSink() {
            @Override
            public void reject(Published reject, String messageJson) {
                seen.add("first " + reject.key());
            }

            @Override
            public void close() {
                seen.add("first closed");
                throw new UncheckedIOException(new IOException("disk full"));
            }
        };
        OutputSink second = new OutputSink() {
            @Override
            public void reject(Published reject, String messageJson) {
                seen.add("second " + reject.key());
            }

            @Override
            public void close() {
                seen.add("second closed");
            }
        };
        OutputSink both = OutputSink.all(failing, second);
        both.reject(new Published("m", "line/3", "{}"), "{}");
        UncheckedIOException thrown = assertThrows(UncheckedIOException.class, both::close);
        assertEquals("disk full", thrown.getCause().getMessage());
        assertEquals(List.of("first line/3", "second line/3", "first closed", "second closed"), seen);
    }
}
