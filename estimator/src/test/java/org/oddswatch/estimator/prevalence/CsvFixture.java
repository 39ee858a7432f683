package org.oddswatch.estimator.prevalence;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * A committed reference fixture: comma-separated with one header line; lines starting with '#' are
 * comments (the first names the library and version that produced the values).
 */
public final class CsvFixture {

    private final List<String> comments;
    private final List<String> header;
    private final List<String[]> rows;

    private CsvFixture(List<String> comments, List<String> header, List<String[]> rows) {
        this.comments = comments;
        this.header = header;
        this.rows = rows;
    }

    /** Loads a classpath resource such as {@code /reference/binomial-intervals.csv}. */
    public static CsvFixture load(String resource) {
        try (InputStream in = CsvFixture.class.getResourceAsStream(resource)) {
            if (in == null) {
                throw new IllegalStateException("missing test resource " + resource);
            }
            BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
            List<String> comments = new ArrayList<>();
            List<String> header = null;
            List<String[]> rows = new ArrayList<>();
            for (String line = reader.readLine(); line != null; line = reader.readLine()) {
                if (line.startsWith("#")) {
                    comments.add(line);
                } else if (!line.isBlank()) {
                    String[] cells = line.split(",", -1);
                    if (header == null) {
                        header = Arrays.asList(cells);
                    } else {
                        rows.add(cells);
                    }
                }
            }
            return new CsvFixture(comments, header, rows);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    public List<String> comments() {
        return comments;
    }

    public int size() {
        return rows.size();
    }

    /** Row {@code i} as column name to text. */
    public Map<String, String> row(int i) {
        Map<String, String> map = new LinkedHashMap<>();
        for (int j = 0; j < header.size(); j++) {
            map.put(header.get(j), rows.get(i)[j]);
        }
        return map;
    }

    public double number(int i, String column) {
        return Double.parseDouble(text(i, column));
    }

    public String text(int i, String column) {
        int j = header.indexOf(column);
        if (j < 0) {
            throw new IllegalArgumentException("no column " + column + " in " + header);
        }
        return rows.get(i)[j];
    }

    public List<String> header() {
        return header;
    }
}
