package org.oddswatch.estimator.fit;

import java.util.HashMap;
import java.util.Map;

/**
 * The rows of a problem grouped by their pattern of 0/1 columns, with the remaining (numeric)
 * columns kept per row. Within a group every 0/1 column is constant, so the information matrix
 * needs per row only {@code sum w}, {@code sum w z_a} and {@code sum w z_a z_b} over the q numeric
 * columns, and the score only {@code sum r} and {@code sum r z_a}; the pattern part is added once
 * per group. This turns the per-row cost from p(p+1)/2 products into (q+1)(q+2)/2.
 *
 * <p>Used when every column but at most {@link #MAX_NUMERIC} holds only 0 and 1 (the intercept
 * counts as such a column), there are at most 64 such columns and at most {@link #MAX_GROUPS}
 * groups. Group numbers follow first appearance in row order, so the decision and the arithmetic
 * depend only on the data.
 */
final class IndicatorGroups {

    static final int MAX_NUMERIC = 4;
    static final int MAX_GROUPS = 4096;
    private static final long ONE_BITS = Double.doubleToRawLongBits(1.0);

    final int q;
    final int groupCount;
    final int[] numericColumns;
    final int[] group;
    final double[] z;
    final int[][] members;
    /** Per group: sum t, sum t z_a and sum t z_a z_b (upper), summed in row order while grouping. */
    private final double[] st;
    private final double[] stz;
    private final double[] stzz;

    /** Whether every row has exactly one trial (row storage), which lets the pass skip the trials. */
    final boolean unitTrials;
    /** Per numeric column, the largest {@code |z|} over the rows. */
    final double[] maxAbsZ;

    private IndicatorGroups(int q, int groupCount, int[] numericColumns, int[] group, double[] z, int[][] members,
                            double[] st, double[] stz, double[] stzz, boolean unitTrials, double[] maxAbsZ) {
        this.unitTrials = unitTrials;
        this.maxAbsZ = maxAbsZ;
        this.st = st;
        this.stz = stz;
        this.stzz = stzz;
        this.q = q;
        this.groupCount = groupCount;
        this.numericColumns = numericColumns;
        this.group = group;
        this.z = z;
        this.members = members;
    }

    /**
     * {@code C = X' diag(n) X} (full symmetric, row-major), summed per group: the rank check's
     * cross-product, from the per-group sums taken while grouping (no further pass over the rows).
     */
    double[] weightedCrossProduct(FitProblem problem) {
        int p = problem.columns();
        double[] c = new double[p * p];
        for (int g = 0; g < groupCount; g++) {
            int[] m = members[g];
            for (int a = 0; a < m.length; a++) {
                for (int b = a; b < m.length; b++) {
                    c[m[a] * p + m[b]] += st[g];
                }
                for (int d = 0; d < q; d++) {
                    addUpper(c, p, m[a], numericColumns[d], stz[g * q + d]);
                }
            }
            for (int d = 0; d < q; d++) {
                for (int e = d; e < q; e++) {
                    addUpper(c, p, numericColumns[d], numericColumns[e], stzz[(g * q + d) * q + e]);
                }
            }
        }
        BinomialPass.mirrorUpper(c, p);
        return c;
    }

    /** Whether column j is 1 in every row (a binary column present in every group). */
    boolean isConstantOne(int j) {
        for (int[] m : members) {
            if (java.util.Arrays.binarySearch(m, j) < 0) {
                return false;
            }
        }
        return true;
    }

    /** Adds v at (min(j,k), max(j,k)) of a row-major p x p matrix. */
    static void addUpper(double[] m, int p, int j, int k, double v) {
        m[Math.min(j, k) * p + Math.max(j, k)] += v;
    }

    /**
     * The grouping of {@code problem}, or null when the problem does not qualify. One pass in the
     * usual case: every column starts as a 0/1 candidate, and a column found to hold another value
     * becomes numeric and the grouping restarts (at most {@link #MAX_NUMERIC} + 1 restarts; a
     * continuous column usually shows itself in its first rows).
     */
    static IndicatorGroups of(FitProblem problem) {
        if (problem.rows() < CACHED_ROWS) {
            return derive(problem);
        }
        synchronized (CACHE) {
            CACHE.removeIf(e -> e.problem.get() == null);
            for (Cached e : CACHE) {
                if (e.problem.get() == problem) {
                    return e.groups;
                }
            }
        }
        IndicatorGroups groups = KnownGrouping.of(problem);
        if (groups == null) {
            groups = derive(problem);
        }
        synchronized (CACHE) {
            if (CACHE.size() == CACHE_SIZE) {
                CACHE.remove(0);
            }
            CACHE.add(new Cached(new java.lang.ref.WeakReference<>(problem), groups));
        }
        return groups;
    }

    /** Problems from this many rows keep their grouping for later fits (profile bounds, LR tests). */
    private static final int CACHED_ROWS = 4096;
    private static final int CACHE_SIZE = 1;

    /** A grouping (null: the problem does not qualify) for one problem instance, held while it lives. */
    private record Cached(java.lang.ref.WeakReference<FitProblem> problem, IndicatorGroups groups) {
    }

    /**
     * The groupings of the last large problem instances (by identity): the window model, its profile
     * bounds and LR tests share one. The problem's arrays must not change while it is in use (see
     * {@link FitProblem}).
     */
    private static final java.util.List<Cached> CACHE = new java.util.ArrayList<>();

    static IndicatorGroups derive(FitProblem problem) {
        int p = problem.columns();
        boolean[] binary = new boolean[p];
        java.util.Arrays.fill(binary, true);
        while (true) {
            int q = 0;
            for (boolean b : binary) {
                if (!b) {
                    q++;
                }
            }
            if (q > MAX_NUMERIC || p - q > 64) {
                return null;
            }
            Attempt attempt = attempt(problem, binary, q);
            if (attempt.nonBinaryColumn() < 0) {
                return attempt.groups();
            }
            binary[attempt.nonBinaryColumn()] = false;
        }
    }

    /** A grouping (null past the group limit), or the first candidate column found not to be 0/1. */
    private record Attempt(IndicatorGroups groups, int nonBinaryColumn) {
    }

    private static Attempt attempt(FitProblem problem, boolean[] binary, int q) {
        int p = problem.columns();
        int n = problem.rows();
        double[] x = problem.x();
        int[] numericColumns = new int[q];
        int[] binaryColumns = new int[p - q];
        for (int j = 0, a = 0, c = 0; j < p; j++) {
            if (binary[j]) {
                binaryColumns[c++] = j;
            } else {
                numericColumns[a++] = j;
            }
        }
        int[] group = new int[n];
        double[] z = new double[n * q];
        long[] wide = binaryColumns.length > 16 ? new long[n] : null;
        final int[] bc = binaryColumns;
        // Pass 1 (streams the design): each row's 0/1 pattern as bits, and its numeric values.
        for (int i = 0; i < n; i++) {
            final int base = i * p;
            long key = 0;
            // On the raw bits, a branch-free test of the whole row: bits << 1 is 0 for +0.0 and -0.0
            // (the sign shifted out), and 1.0 is matched exactly; anything else leaves other != 0.
            // Of the three, only 1.0 has bit 61 set.
            long other = 0;
            for (int c = 0; c < bc.length; c++) {
                final long bits = Double.doubleToRawLongBits(x[base + bc[c]]);
                key |= (bits >>> 61 & 1L) << c;
                other |= bits == ONE_BITS ? 0L : bits << 1;
            }
            if (other != 0) {
                for (int c = 0; ; c++) {
                    double v = x[base + bc[c]];
                    if (v != 0 && v != 1) {
                        return new Attempt(null, bc[c]);
                    }
                }
            }
            if (wide == null) {
                group[i] = (int) key;
            } else {
                wide[i] = key;
            }
            for (int a = 0; a < q; a++) {
                z[i * q + a] = x[base + numericColumns[a]];
            }
        }
        return new Attempt(numbered(binaryColumns, numericColumns, n, group, wide, z, problem.trials()), -1);
    }

    /**
     * Pass 2 of the grouping, over compact arrays only: the rows' 0/1 patterns (bit c for
     * {@code binaryColumns[c]}; in {@code group} itself when {@code wide} is null, which needs at
     * most 16 binary columns) numbered by first appearance, with the rank check's trials-weighted
     * sums. {@code group} is overwritten with the group numbers. Null past {@link #MAX_GROUPS} groups.
     */
    static IndicatorGroups numbered(int[] binaryColumns, int[] numericColumns, int n, int[] group, long[] wide,
                                    double[] z, double[] trials) {
        final int q = numericColumns.length;
        // Up to 16 binary columns: a direct table from pattern bits to group number + 1.
        int[] table = binaryColumns.length <= 16 ? new int[1 << binaryColumns.length] : null;
        Map<Long, Integer> ids = new HashMap<>();
        java.util.List<Long> keys = new java.util.ArrayList<>();
        double[] st = new double[MAX_GROUPS];
        double[] stz = new double[MAX_GROUPS * q];
        double[] stzz = new double[MAX_GROUPS * q * q];
        // Pass 2 (compact arrays only): patterns numbered by first appearance, and trial sums.
        boolean unit = true;
        double[] maxAbsZ = new double[q];
        for (int i = 0; i < n; i++) {
            final long key = wide == null ? group[i] : wide[i];
            int id;
            if (table != null) {
                id = table[(int) key] - 1;
                if (id < 0) {
                    if (keys.size() == MAX_GROUPS) {
                        return null;
                    }
                    id = keys.size();
                    table[(int) key] = id + 1;
                    keys.add(key);
                }
            } else {
                Integer known = ids.get(key);
                if (known == null) {
                    if (keys.size() == MAX_GROUPS) {
                        return null;
                    }
                    known = keys.size();
                    ids.put(key, known);
                    keys.add(key);
                }
                id = known;
            }
            group[i] = id;
            for (int a = 0; a < q; a++) {
                maxAbsZ[a] = Math.max(maxAbsZ[a], Math.abs(z[i * q + a]));
            }
            // The rank check's trials-weighted sums, in row order.
            double ti = trials[i];
            unit &= ti == 1;
            if (ti != 0) {
                st[id] += ti;
                for (int a = 0; a < q; a++) {
                    double tz = ti * z[i * q + a];
                    stz[id * q + a] += tz;
                    for (int b = a; b < q; b++) {
                        stzz[(id * q + a) * q + b] += tz * z[i * q + b];
                    }
                }
            }
        }
        int[][] members = new int[keys.size()][];
        for (int g = 0; g < keys.size(); g++) {
            long key = keys.get(g);
            members[g] = new int[Long.bitCount(key)];
            for (int c = 0, m = 0; c < binaryColumns.length; c++) {
                if ((key >>> c & 1L) != 0) {
                    members[g][m++] = binaryColumns[c];
                }
            }
        }
        return new IndicatorGroups(q, keys.size(), numericColumns, group, z, members, st, stz, stzz, unit, maxAbsZ);
    }
}
