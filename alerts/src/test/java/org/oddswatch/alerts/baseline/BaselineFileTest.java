package org.oddswatch.alerts.baseline;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.alerts.Fixtures;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.terms.DesignCoder;
import org.oddswatch.estimator.terms.NumericTerm;

class BaselineFileTest {

    /** The design the fixture baseline belongs to, built from real terms. */
    private static List<Column> design() {
        return new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new NumericTerm("age_years", 10, false))).columns();
    }

    @Test
    void roundTripKeepsEverything(@TempDir Path dir) {
        BaselineModel m = Fixtures.baseline();
        Path f = dir.resolve("baselines/north.json");
        BaselineFile.write(f, m);
        BaselineModel back = BaselineFile.read(f, design());
        assertEquals(m.columns(), back.columns());
        assertArrayEquals(m.coefficients(), back.coefficients());
        for (int i = 0; i < 3; i++) {
            assertArrayEquals(m.covariance()[i], back.covariance()[i]);
        }
        assertEquals(m.periodStart(), back.periodStart());
        assertEquals(m.periodEnd(), back.periodEnd());
        assertEquals(24000, back.events());
        assertEquals(1210, back.cases());
        assertTrue(BaselineFile.checksumMatches(back, "sha256:test"));
        assertEquals(BaselineFile.toJson(m), BaselineFile.toJson(back), "byte-identical on rewrite");
    }

    @Test
    void mismatchedDesignNamesTheFileAndTheColumn(@TempDir Path dir) {
        Path f = dir.resolve("north.json");
        BaselineFile.write(f, Fixtures.baseline());
        List<Column> other = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true),
                new NumericTerm("age_years", 5, false))).columns();
        BaselineFileException e = assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, other));
        assertTrue(e.getMessage().contains(f.toString()), e.getMessage());
        assertTrue(e.getMessage().contains("column 2 is age_years (per 10.0) in the file but age_years (per 5.0)"),
                e.getMessage());
        List<Column> fewer = new DesignCoder(List.of(new BinaryTerm("household_contact", "yes", "no", null, true)))
                .columns();
        e = assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, fewer));
        assertTrue(e.getMessage().contains("it has 3 columns [intercept, household_contact=yes, age_years]"),
                e.getMessage());
    }

    @Test
    void malformedFilesAreRejectedWithAReason(@TempDir Path dir) throws Exception {
        Path f = dir.resolve("bad.json");
        String good = BaselineFile.toJson(Fixtures.baseline());
        Files.writeString(f, good.replace("[-3.0,0.7,0.1]", "[-3.0,0.7]"));
        assertTrue(assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, null)).getMessage()
                .contains("3 columns but 2 coefficients"));
        Files.writeString(f, good.replace("oddswatch-baseline/1", "something-else"));
        assertTrue(assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, null)).getMessage()
                .contains("expected 'oddswatch-baseline/1'"));
        Files.writeString(f, good.replace("[0.0,0.0064,0.0]", "[0.1,0.0064,0.0]"));
        assertTrue(assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, null)).getMessage()
                .contains("not symmetric"));
        Files.writeString(f, "{\"format\": ");
        assertTrue(assertThrows(BaselineFileException.class, () -> BaselineFile.read(f, null)).getMessage()
                .contains("not valid JSON"));
        assertTrue(assertThrows(BaselineFileException.class, () -> BaselineFile.read(dir.resolve("none.json"), null))
                .getMessage().contains("cannot read"));
    }
}
