package org.oddswatch.estimator.reference;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.Arrays;
import java.util.HexFormat;
import java.util.List;
import java.util.Map;
import org.oddswatch.estimator.fit.FitProblem;

/**
 * The designs of {@code /reference/random-designs.csv}, written by
 * src/test/reference/random_designs.py. A line stores the outcome counts and the reference fit; the
 * design matrix and the trials are rebuilt here from the line's seed, column specification, row count
 * and trials cap, with the script's generator (SplitMix64, integer arithmetic, correctly rounded
 * division and addition only), so the doubles are identical; {@link #sha256()} checks that against
 * the line.
 *
 * @param id line number in the fixture
 * @param reference "ml" (statsmodels GLM) or "firth" (brglm2 MPL_Jeffreys)
 * @param storage "rows" (one event per row) or "patterns" (covariate patterns with trials)
 * @param spec one token per design column (see the script's docstring)
 */
record RandomDesigns(int id, String reference, String storage, long seed, int rows, int cap, String[] spec,
                     String expectedSha256, long totalTrials, double[] positives, double[] coef, double[] se) {

    static final String RESOURCE = "/reference/random-designs.csv";

    static List<RandomDesigns> load() {
        return Fixture.rows(RESOURCE).stream().map(RandomDesigns::of).toList();
    }

    private static RandomDesigns of(Map<String, String> r) {
        int rows = Integer.parseInt(r.get("rows"));
        String pos = r.get("positives");
        double[] positives = new double[rows];
        if (pos.startsWith("h")) {
            for (int i = 0; i < rows; i++) {
                int nibble = Character.digit(pos.charAt(1 + i / 4), 16);
                positives[i] = (nibble >> (3 - i % 4) & 1) == 1 ? 1 : 0;
            }
        } else {
            positives = numbers(pos);
        }
        return new RandomDesigns(Integer.parseInt(r.get("id")), r.get("reference"), r.get("storage"),
                Long.parseLong(r.get("seed")), rows, Integer.parseInt(r.get("cap")), r.get("spec").split(" "),
                r.get("sha256"), Long.parseLong(r.get("trials")), positives, numbers(r.get("coef")),
                numbers(r.get("se")));
    }

    private static double[] numbers(String field) {
        return Arrays.stream(field.split(" ")).mapToDouble(Double::parseDouble).toArray();
    }

    int columns() {
        return spec.length;
    }

    /** The rebuilt design and trials with the stored positives. */
    FitProblem problem() {
        Built b = build();
        return FitProblem.of(rows, spec.length, b.x, b.trials, positives);
    }

    /** First 16 hex digits of sha256 over the design (row-major) then the trials, little-endian doubles. */
    String sha256() {
        Built b = build();
        ByteBuffer buf = ByteBuffer.allocate(8 * (b.x.length + b.trials.length)).order(ByteOrder.LITTLE_ENDIAN);
        for (double v : b.x) {
            buf.putDouble(v);
        }
        for (double v : b.trials) {
            buf.putDouble(v);
        }
        try {
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(buf.array())).substring(0, 16);
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
    }

    private record Built(double[] x, double[] trials) {
    }

    /** The script's {@code build}, line for line. */
    private Built build() {
        SplitMix64 g = new SplitMix64(seed);
        int p = spec.length;
        double[] x = new double[rows * p];
        double[] trials = new double[rows];
        for (int i = 0; i < rows; i++) {
            int base = i * p;
            int j = 0;
            while (j < p) {
                String tok = spec[j];
                char kind = tok.charAt(0);
                if (tok.equals("1")) {
                    x[base + j] = 1.0;
                } else if (kind == 'b') {
                    x[base + j] = g.below(100) < Integer.parseInt(tok.substring(1)) ? 1.0 : 0.0;
                } else if (kind == 'c') {
                    int k = Integer.parseInt(tok.substring(1));
                    long level = g.below(k);
                    for (int l = 1; l < k; l++) {
                        x[base + j + l - 1] = level == l ? 1.0 : 0.0;
                    }
                    j += k - 1;
                    continue;
                } else if (kind == 'u') {
                    String[] a = tok.substring(1).split(":");
                    x[base + j] = (double) Integer.parseInt(a[0])
                            + (double) g.below(Integer.parseInt(a[1])) / (double) Integer.parseInt(a[2]);
                } else if (kind == 'k') {
                    String[] a = tok.substring(1).split(":");
                    int m = Integer.parseInt(a[1]);
                    x[base + j] = x[base + Integer.parseInt(a[0])]
                            + (double) (g.below(m) - m / 2) / (double) Integer.parseInt(a[2]);
                } else {
                    throw new IllegalStateException("design " + id + ": unknown column token " + tok);
                }
                j++;
            }
            trials[i] = cap > 0 ? (double) (1 + g.below(2L * cap - 1)) : 1.0;
        }
        return new Built(x, trials);
    }

    /**
     * SplitMix64 (Steele, Lea and Flood 2014), the generator of {@link java.util.SplittableRandom},
     * written out because the script must reproduce every draw.
     */
    private static final class SplitMix64 {
        private long state;

        SplitMix64(long seed) {
            state = seed;
        }

        long next() {
            state += 0x9E3779B97F4A7C15L;
            long z = state;
            z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
            z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
            return z ^ (z >>> 31);
        }

        /** The top 53 bits modulo m, as the script's {@code below}. */
        long below(long m) {
            return (next() >>> 11) % m;
        }
    }
}
