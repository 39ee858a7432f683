package org.oddswatch.estimator.fit;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/** Reads whitespace- or comma-separated numeric tables from test resources. */
public final class TestData {

    private TestData() {
    }

    /** The numeric rows of a resource, header line(s) starting with a non-numeric token skipped. */
    public static List<double[]> table(String resource) {
        try (InputStream in = TestData.class.getResourceAsStream(resource)) {
            if (in == null) {
                throw new IllegalStateException("missing test resource " + resource);
            }
            BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
            List<double[]> rows = new ArrayList<>();
            String line;
            while ((line = reader.readLine()) != null) {
                line = line.trim();
                if (line.isEmpty() || line.startsWith("#")) {
                    continue;
                }
                String[] parts = line.split("[,\\s]+");
                if (!isNumber(parts[0])) {
                    continue;
                }
                double[] row = new double[parts.length];
                for (int k = 0; k < parts.length; k++) {
                    row[k] = Double.parseDouble(parts[k]);
                }
                rows.add(row);
            }
            return rows;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static boolean isNumber(String s) {
        try {
            Double.parseDouble(s);
            return true;
        } catch (NumberFormatException e) {
            return false;
        }
    }
}
