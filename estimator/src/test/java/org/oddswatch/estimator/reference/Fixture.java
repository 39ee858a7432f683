package org.oddswatch.estimator.reference;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.oddswatch.estimator.fit.FitProblem;
import org.oddswatch.estimator.terms.CodingOutcome;
import org.oddswatch.estimator.terms.DesignCoder;

/** Reads the R-generated fixtures under {@code /reference/glm/}: data tables and fitted coefficients. */
final class Fixture {

    private Fixture() {
    }

    /** Rows of a headed CSV resource as column-name maps; lines starting with '#' are skipped. */
    static List<Map<String, String>> rows(String resource) {
        try (InputStream in = Fixture.class.getResourceAsStream(resource)) {
            if (in == null) {
                throw new IllegalStateException("missing test resource " + resource);
            }
            BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
            List<Map<String, String>> rows = new ArrayList<>();
            String[] header = null;
            String line;
            while ((line = reader.readLine()) != null) {
                if (line.isBlank() || line.startsWith("#")) {
                    continue;
                }
                String[] parts = line.split(",", -1);
                if (header == null) {
                    header = parts;
                    continue;
                }
                Map<String, String> row = new LinkedHashMap<>();
                for (int k = 0; k < header.length; k++) {
                    row.put(header[k], parts[k]);
                }
                rows.add(row);
            }
            return rows;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** The first comment line of a resource (it names the library and version). */
    static String source(String resource) {
        try (InputStream in = Fixture.class.getResourceAsStream(resource)) {
            return new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8)).readLine();
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** Coefficients ("coef") and standard errors ("se") of a fit fixture, in R's column order. */
    static double[][] fit(String resource) {
        List<Map<String, String>> rows = rows(resource);
        double[][] out = new double[2][rows.size()];
        for (int k = 0; k < rows.size(); k++) {
            out[0][k] = Double.parseDouble(rows.get(k).get("coef"));
            out[1][k] = Double.parseDouble(rows.get(k).get("se"));
        }
        return out;
    }

    /**
     * Codes data rows into a grouped problem: {@code fields[t]} is the CSV column of term t; trials
     * and positives come from the named columns, or trials 1 and the 0/1 {@code positivesField}.
     */
    static FitProblem problem(DesignCoder coder, List<Map<String, String>> data, String[] fields, String trialsField,
                              String positivesField) {
        int p = coder.width();
        int n = data.size();
        double[] x = new double[n * p];
        double[] trials = new double[n];
        double[] positives = new double[n];
        double[] row = new double[p];
        for (int i = 0; i < n; i++) {
            Map<String, String> r = data.get(i);
            Object[] raw = new Object[fields.length];
            for (int t = 0; t < fields.length; t++) {
                raw[t] = r.get(fields[t]);
            }
            CodingOutcome outcome = coder.code(raw, row);
            if (!outcome.isOk()) {
                throw new IllegalStateException("row " + i + ": " + outcome);
            }
            System.arraycopy(row, 0, x, i * p, p);
            trials[i] = trialsField == null ? 1 : Double.parseDouble(r.get(trialsField));
            positives[i] = Double.parseDouble(r.get(positivesField));
        }
        return FitProblem.of(n, p, x, trials, positives);
    }
}
