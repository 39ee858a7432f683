package org.oddswatch.estimator.fit;

import java.lang.ref.WeakReference;
import java.util.ArrayList;
import java.util.List;

/**
 * The indicator grouping of a design that its producer already knows, handed to the fitters so
 * that they need not derive it again from the doubles. The window store knows each row's
 * indicator bits, so it can attach the grouping of the design it assembles at a fraction of the
 * cost of recovering it from the dense design ({@code IndicatorGroups}).
 *
 * <p>A grouping is attached to one design array and one trials array (by identity, held weakly)
 * and used for every {@link FitProblem} made of exactly those arrays with the same width and row
 * count. Its arrays must not change afterwards, as {@link FitProblem} already requires; the values
 * of an attached design are finite by construction, so {@link FitProblem} does not scan them again. The
 * grouping must be the one the fitters would find themselves: patterns of the columns that hold
 * only 0 and 1 (the intercept included), numbered by first appearance in row order.
 */
public final class KnownGrouping {

    private static final int SIZE = 2;
    private static final List<Entry> ATTACHED = new ArrayList<>();

    private record Entry(WeakReference<double[]> x, WeakReference<double[]> trials, int columns, int rows,
                         IndicatorGroups groups) {
    }

    private KnownGrouping() {
    }

    /**
     * Attaches the grouping of the design {@code x} (n rows of {@code columns}, all finite) with
     * trials {@code trials}.
     *
     * @param binaryColumns the columns holding only 0 and 1, ascending (at most 64)
     * @param numericColumns the other columns, ascending (at most 4)
     * @param keys per row, bit c set when {@code binaryColumns[c]} is 1 (at most 16 binary columns);
     *     overwritten with group numbers
     * @param z per row, the values of the numeric columns (row-major n x q)
     * @return whether it was attached (false past the group limit or outside the limits above)
     */
    public static boolean attach(double[] x, int columns, double[] trials, int[] binaryColumns, int[] numericColumns,
                                 int[] keys, double[] z) {
        int n = trials.length;
        if (binaryColumns.length > 16 || numericColumns.length > IndicatorGroups.MAX_NUMERIC
                || binaryColumns.length + numericColumns.length != columns || keys.length != n
                || z.length != n * numericColumns.length || x.length != n * columns) {
            return false;
        }
        IndicatorGroups groups = IndicatorGroups.numbered(binaryColumns.clone(), numericColumns.clone(), n, keys, null,
                z, trials);
        if (groups == null) {
            return false;
        }
        synchronized (ATTACHED) {
            ATTACHED.removeIf(e -> e.x.get() == null);
            if (ATTACHED.size() == SIZE) {
                ATTACHED.remove(0);
            }
            ATTACHED.add(new Entry(new WeakReference<>(x), new WeakReference<>(trials), columns, n, groups));
        }
        return true;
    }

    /** Whether a grouping is attached to this design array (then assembled by the store: finite values). */
    static boolean isAttached(double[] x, int columns, int rows) {
        synchronized (ATTACHED) {
            for (Entry e : ATTACHED) {
                if (e.x.get() == x && e.columns == columns && e.rows == rows) {
                    return true;
                }
            }
        }
        return false;
    }

    /** The grouping attached to this problem's arrays, or null. */
    static IndicatorGroups of(FitProblem problem) {
        synchronized (ATTACHED) {
            for (Entry e : ATTACHED) {
                if (e.x.get() == problem.x() && e.trials.get() == problem.trials() && e.columns == problem.columns()
                        && e.rows == problem.rows()) {
                    return e.groups;
                }
            }
        }
        return null;
    }
}
