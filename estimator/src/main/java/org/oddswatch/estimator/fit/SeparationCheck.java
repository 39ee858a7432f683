package org.oddswatch.estimator.fit;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.exception.MathIllegalStateException;
import org.apache.commons.math3.optim.MaxIter;
import org.apache.commons.math3.optim.PointValuePair;
import org.apache.commons.math3.optim.linear.LinearConstraint;
import org.apache.commons.math3.optim.linear.LinearConstraintSet;
import org.apache.commons.math3.optim.linear.LinearObjectiveFunction;
import org.apache.commons.math3.optim.linear.NonNegativeConstraint;
import org.apache.commons.math3.optim.linear.PivotSelectionRule;
import org.apache.commons.math3.optim.linear.Relationship;
import org.apache.commons.math3.optim.linear.SimplexSolver;
import org.apache.commons.math3.optim.nonlinear.scalar.GoalType;

/**
 * Detects complete or quasi-complete separation (Albert &amp; Anderson 1984) of a full-rank design.
 *
 * <p>Criterion: the maximum-likelihood estimate fails to exist exactly when some direction
 * {@code b != 0} has {@code x_i . b >= 0} for every point with a positive and {@code x_i . b <= 0}
 * for every point with a negative, with at least one inequality strict (a grouped row with both
 * outcomes contributes both points, forcing {@code x_i . b = 0}). With {@code a_i = s_i x_i} (sign
 * {@code s_i = +1} for a positive point, {@code -1} for a negative one) this is decided by the linear
 * programme of Konis (2007):
 * <pre>
 *   maximise c . b,  c = sum_i a_i,   subject to  a_i . b &gt;= 0 for every point i,  -1 &lt;= b_j &lt;= 1,
 * </pre>
 * separation iff the optimum is positive; the columns with a non-zero {@code b_j} are the ones involved
 * (their estimates run off to infinity).
 *
 * <p>The programme is solved by constraint generation, so the simplex (Commons Math's, dense) only ever
 * sees a small set S of the points: start with S empty; solve the programme over S (a relaxation: same
 * objective, fewer constraints, so its optimum is at least the full one); when that optimum is 0 (at
 * most 1e-9 of the scaled objective) no point set can be separated, the full programme included, and
 * the answer is NONE; otherwise check the relaxation's solution b against every point in {@code O(n p)}
 * and, when some point has {@code a_i . b < 0} (beyond rounding, 1e-9 p), add the
 * {@link #BATCH} most violated ones (ties by row order) to S and solve again. A solution that satisfies
 * every point is optimal for the full programme, so the verdict and the involved columns are those of
 * the full programme. The programme runs on the columns recoded by {@link ColumnStandardization}
 * (beside an intercept every other column centred on its midpoint and divided by its half-range, so it
 * spans [-1, 1]): separation depends only on the column space, but in raw units an age in days is 10^4
 * times an indicator and a calendar year nearly a multiple of the intercept, and the simplex, which
 * compares to 1e-6, read rounding as separation or failed. Points and objective are scaled (each
 * recoded {@code a_i} by {@code 1 / |a_i|_1}, c by {@code 1 / max_j |c_j|}) so the simplex's tolerances
 * are relative; the margins of all points are read on the raw rows (or the grouping) with the raw
 * direction {@code T b'}, and the direction reported is the raw one. Every step is deterministic.
 *
 * <p>S stays small because a separating direction or an overlap certificate needs few points
 * (typically two or three rounds). After {@link #MAX_ROUNDS} rounds, if the simplex fails, or if its
 * solution violates one of its own constraints beyond rounding (Commons Math's simplex compares to
 * 1e-6, so on nearly degenerate programmes it can return a point that is not feasible), the answer is
 * UNDECIDED and {@link #heuristic} decides from a Newton fit run without the divergence stop: one that
 * did not converge, or converged with some linear predictor beyond {@code +-}{@link #HEURISTIC_ETA}
 * (fitted probability within 1e-13 of 0 or 1, which no finite maximum of a well-posed window needs),
 * counts as separated.
 */
public final class SeparationCheck {

    /** |eta| beyond which a fitted probability counts as numerically 0 or 1. */
    public static final double EXTREME_ETA = 15;
    /** |eta| beyond which a converged fit still counts as separated when the programme is undecided. */
    public static final double HEURISTIC_ETA = 30;
    /** Violated points added to the programme per round. */
    static final int BATCH = 32;
    /**
     * Pivots per constraint allowed to the split formulation (tried first) and to the formulation with a
     * phase one (the second): a degenerate phase one otherwise ran thousands of pivots (seconds).
     */
    static final int PIVOTS_PER_CONSTRAINT = 20;
    /** Pivots allowed to the last formulation of a round's programme (free variables, no phase one). */
    static final int FALLBACK_PIVOTS = 2_000;
    /** Rounds of constraint generation before the check gives up (UNDECIDED). */
    static final int MAX_ROUNDS = 40;

    private static final double POSITIVE = 1e-9;
    private static final double VIOLATION = 1e-9;
    private static final double INVOLVED = 1e-9;

    private SeparationCheck() {
    }

    /** The check's answer. */
    public enum Verdict { NONE, SEPARATED, UNDECIDED }

    /**
     * @param verdict NONE, SEPARATED, or UNDECIDED when the programme could not be solved
     * @param involved columns with a non-zero component in the separating direction (empty unless separated)
     * @param direction the programme's optimal b (a separating direction when separated), null when undecided
     * @param rounds simplex solutions needed (constraint-generation rounds)
     * @param points points the last programme held
     */
    public record Outcome(Verdict verdict, int[] involved, double[] direction, int rounds, int points) {
    }

    /** Whether a Newton fit shows the symptoms that call for the exact check. */
    public static boolean suspicious(FitResult fit) {
        return !fit.converged() || fit.maxAbsLinearPredictor() > EXTREME_ETA;
    }

    /** The fallback decision when the programme could not be solved. */
    public static boolean heuristic(FitResult fit) {
        return !fit.converged() || fit.maxAbsLinearPredictor() > HEURISTIC_ETA;
    }

    /** Decides separation of a full-rank problem (offsets are ignored). */
    public static Outcome check(FitProblem problem) {
        return check(problem, IndicatorGroups.of(problem));
    }

    /**
     * As above, with the problem's indicator grouping (or null): the passes over the points then read each
     * row's group number and numeric values instead of its whole design row.
     */
    static Outcome check(FitProblem problem, IndicatorGroups groups) {
        int p = problem.columns();
        int n = problem.rows();
        double[] x = problem.x();
        double[] t = problem.trials();
        double[] y = problem.positives();
        ColumnStandardization recoding = ColumnStandardization.of(problem);
        double[] c = recoding.recodeSum(objective(problem, groups));
        double cMax = 0;
        for (double v : c) {
            cMax = Math.max(cMax, Math.abs(v));
        }
        if (cMax > 0) {
            for (int j = 0; j < p; j++) {
                c[j] /= cMax;
            }
        }
        List<double[]> active = new ArrayList<>();
        // Point k = 2 i (positive side of row i) or 2 i + 1 (negative side).
        java.util.BitSet inProgramme = new java.util.BitSet();
        for (int round = 1; round <= MAX_ROUNDS; round++) {
            double[] b = solve(c, active, p);
            if (b == null) {
                return new Outcome(Verdict.UNDECIDED, new int[0], null, round, active.size());
            }
            double value = 0;
            for (int j = 0; j < p; j++) {
                value += c[j] * b[j];
            }
            double[] raw = recoding.toRaw(b);
            if (value <= POSITIVE) {
                return new Outcome(Verdict.NONE, new int[0], raw, round, active.size());
            }
            MostViolated worst = new MostViolated(BATCH);
            // x'_i . b' = x_i . T b': the margins are read on the raw rows (or the grouping) with the raw
            // direction; every recoded row has |x'_i|_1 <= p, which scales the rounding allowance.
            RowMargins rows = new RowMargins(problem, groups, raw);
            double allowance = VIOLATION * p;
            boolean programmeViolated = false;
            for (int i = 0; i < n; i++) {
                int sign = pointSigns(t[i], y[i]);
                if (sign == 0) {
                    continue;
                }
                double eta = rows.eta(i);
                if ((sign & 1) != 0 && eta < -allowance) {
                    if (inProgramme.get(2 * i)) {
                        programmeViolated = true;
                    } else {
                        worst.offer(eta, 2 * i);
                    }
                }
                if ((sign & 2) != 0 && -eta < -allowance) {
                    if (inProgramme.get(2 * i + 1)) {
                        programmeViolated = true;
                    } else {
                        worst.offer(-eta, 2 * i + 1);
                    }
                }
            }
            if (worst.size() == 0) {
                // A solution that violates its own constraints beyond rounding is no certificate.
                return programmeViolated ? new Outcome(Verdict.UNDECIDED, new int[0], null, round, active.size())
                        : new Outcome(Verdict.SEPARATED, recoding.involved(b, INVOLVED), raw, round,
                                active.size());
            }
            double[] row = new double[p];
            for (int k : worst.pointsInOrder()) {
                inProgramme.set(k);
                int i = k / 2;
                double s = k % 2 == 0 ? 1 : -1;
                recoding.row(x, i, row);
                double norm = 0;
                for (int j = 0; j < p; j++) {
                    norm += Math.abs(row[j]);
                }
                double[] a = new double[p];
                for (int j = 0; j < p; j++) {
                    a[j] = s * row[j] / norm;
                }
                active.add(a);
            }
        }
        return new Outcome(Verdict.UNDECIDED, new int[0], null, MAX_ROUNDS, active.size());
    }

    /** {@code c = sum_i a_i} over the points (a row with both outcomes adds nothing: its two points cancel). */
    private static double[] objective(FitProblem problem, IndicatorGroups groups) {
        int p = problem.columns();
        double[] t = problem.trials();
        double[] y = problem.positives();
        double[] c = new double[p];
        if (groups != null) {
            int q = groups.q;
            double[] bySign = new double[groups.groupCount];
            double[] zBySign = new double[groups.groupCount * q];
            for (int i = 0; i < problem.rows(); i++) {
                int sign = pointSigns(t[i], y[i]);
                if (sign == 1 || sign == 2) {
                    double s = sign == 1 ? 1 : -1;
                    int g = groups.group[i];
                    bySign[g] += s;
                    for (int a = 0; a < q; a++) {
                        zBySign[g * q + a] += s * groups.z[i * q + a];
                    }
                }
            }
            for (int g = 0; g < groups.groupCount; g++) {
                for (int j : groups.members[g]) {
                    c[j] += bySign[g];
                }
                for (int a = 0; a < q; a++) {
                    c[groups.numericColumns[a]] += zBySign[g * q + a];
                }
            }
            return c;
        }
        double[] x = problem.x();
        for (int i = 0; i < problem.rows(); i++) {
            int sign = pointSigns(t[i], y[i]);
            if (sign == 1 || sign == 2) {
                double s = sign == 1 ? 1 : -1;
                for (int j = 0; j < p; j++) {
                    c[j] += s * x[i * p + j];
                }
            }
        }
        return c;
    }

    /**
     * {@code x_i . b} of each row: from the design row, or with a grouping as the group's part (the sum of
     * b over its 0/1 columns) plus the row's numeric values.
     */
    private static final class RowMargins {
        private final FitProblem problem;
        private final IndicatorGroups groups;
        private final double[] b;
        private final double[] groupEta;
        private final double[] bz;

        RowMargins(FitProblem problem, IndicatorGroups groups, double[] b) {
            this.problem = problem;
            this.groups = groups;
            this.b = b;
            if (groups == null) {
                groupEta = null;
                bz = null;
                return;
            }
            groupEta = new double[groups.groupCount];
            for (int g = 0; g < groups.groupCount; g++) {
                for (int j : groups.members[g]) {
                    groupEta[g] += b[j];
                }
            }
            bz = new double[groups.q];
            for (int a = 0; a < groups.q; a++) {
                bz[a] = b[groups.numericColumns[a]];
            }
        }

        double eta(int i) {
            if (groups == null) {
                int p = problem.columns();
                double eta = 0;
                for (int j = 0; j < p; j++) {
                    eta += problem.x()[i * p + j] * b[j];
                }
                return eta;
            }
            int q = groups.q;
            double eta = groupEta[groups.group[i]];
            for (int a = 0; a < q; a++) {
                eta += groups.z[i * q + a] * bz[a];
            }
            return eta;
        }
    }

    /** Bit 1: the row has a positive point; bit 2: a negative point. */
    private static int pointSigns(double trials, double positives) {
        if (trials == 0) {
            return 0;
        }
        return (positives > 0 ? 1 : 0) | (trials - positives > 0 ? 2 : 0);
    }

    /**
     * The programme over the given points: its optimal b, or null when the simplex fails in every
     * formulation. First split ({@link #solveSplit}: {@code b = u - v}, every constraint {@code <=} with a
     * non-negative right-hand side, so it starts from b = 0 with no phase one), with at most
     * {@link #PIVOTS_PER_CONSTRAINT} pivots per constraint; its solution is kept when it satisfies every
     * given point to rounding ({@link #VIOLATION}; the box is only a normalisation, so a component a
     * rounding beyond 1 is harmless). Otherwise as written ({@code a_i . b >= 0}, {@code -1 <= b_j <= 1},
     * same pivot cap), which needs a phase one: Commons Math's phase one is degenerate here (every point
     * constraint has right-hand side 0) and with Bland's rule could run thousands of pivots, seconds of
     * CPU, before the cap was per constraint. When that fails too, with free variables and every
     * constraint as {@code <=} ({@code -a_i . b <= 0}, {@code -b_j <= 1}, at most {@link #FALLBACK_PIVOTS}
     * pivots). Every solution is then checked against all points like any other (see the class comment).
     */
    private static double[] solve(double[] c, List<double[]> points, int p) {
        double[] b = solveSplit(c, points, p);
        if (b != null && feasible(b, points)) {
            return b;
        }
        b = solve(c, points, p, false);
        return b != null ? b : solve(c, points, p, true);
    }

    /** Whether b satisfies every given point to rounding: {@code a_i . b >= -}{@link #VIOLATION}. */
    private static boolean feasible(double[] b, List<double[]> points) {
        for (double[] a : points) {
            double m = 0;
            for (int j = 0; j < a.length; j++) {
                m += a[j] * b[j];
            }
            if (m < -VIOLATION) {
                return false;
            }
        }
        return true;
    }

    /**
     * The programme with {@code b = u - v}, {@code u, v >= 0}: maximise {@code c . u - c . v} subject to
     * {@code -a_i . u + a_i . v <= 0}, {@code u_j <= 1}, {@code v_j <= 1}. Every right-hand side is
     * non-negative, so the slack basis (b = 0) is feasible and there is no phase one; every variable is
     * non-negative, so Commons Math adds no shared shift variable for free ones.
     */
    private static double[] solveSplit(double[] c, List<double[]> points, int p) {
        List<LinearConstraint> constraints = new ArrayList<>(points.size() + 2 * p);
        for (double[] a : points) {
            double[] row = new double[2 * p];
            for (int j = 0; j < p; j++) {
                row[j] = -a[j];
                row[p + j] = a[j];
            }
            constraints.add(new LinearConstraint(row, Relationship.LEQ, 0));
        }
        for (int j = 0; j < 2 * p; j++) {
            double[] unit = new double[2 * p];
            unit[j] = 1;
            constraints.add(new LinearConstraint(unit, Relationship.LEQ, 1));
        }
        double[] objective = new double[2 * p];
        for (int j = 0; j < p; j++) {
            objective[j] = c[j];
            objective[p + j] = -c[j];
        }
        try {
            double[] uv = new SimplexSolver().optimize(new MaxIter(PIVOTS_PER_CONSTRAINT * (points.size() + 2 * p)),
                    new LinearObjectiveFunction(objective, 0), new LinearConstraintSet(constraints),
                    GoalType.MAXIMIZE, new NonNegativeConstraint(true), PivotSelectionRule.BLAND).getPoint();
            double[] b = new double[p];
            for (int j = 0; j < p; j++) {
                b[j] = uv[j] - uv[p + j];
            }
            return b;
        } catch (MathIllegalStateException e) {
            return null;
        }
    }

    private static double[] solve(double[] c, List<double[]> points, int p, boolean allAtMost) {
        List<LinearConstraint> constraints = new ArrayList<>(points.size() + 2 * p);
        for (double[] a : points) {
            if (allAtMost) {
                double[] negated = new double[p];
                for (int j = 0; j < p; j++) {
                    negated[j] = -a[j];
                }
                constraints.add(new LinearConstraint(negated, Relationship.LEQ, 0));
            } else {
                constraints.add(new LinearConstraint(a, Relationship.GEQ, 0));
            }
        }
        for (int j = 0; j < p; j++) {
            double[] unit = new double[p];
            unit[j] = 1;
            constraints.add(new LinearConstraint(unit, Relationship.LEQ, 1));
            if (allAtMost) {
                double[] minus = new double[p];
                minus[j] = -1;
                constraints.add(new LinearConstraint(minus, Relationship.LEQ, 1));
            } else {
                constraints.add(new LinearConstraint(unit, Relationship.GEQ, -1));
            }
        }
        try {
            PointValuePair optimum = new SimplexSolver().optimize(new MaxIter(allAtMost ? FALLBACK_PIVOTS : PIVOTS_PER_CONSTRAINT * (points.size() + 2 * p)),
                    new LinearObjectiveFunction(c, 0), new LinearConstraintSet(constraints), GoalType.MAXIMIZE,
                    new NonNegativeConstraint(false), PivotSelectionRule.BLAND);
            return optimum.getPoint();
        } catch (MathIllegalStateException e) {
            return null;
        }
    }

    /**
     * The {@code capacity} points with the smallest scaled margin, ties broken by the smaller point
     * index: a binary max-heap on (margin, index), so a pass over n points costs {@code O(n log capacity)}.
     */
    private static final class MostViolated {
        private final double[] margin;
        private final int[] point;
        private int size;

        MostViolated(int capacity) {
            margin = new double[capacity];
            point = new int[capacity];
        }

        int size() {
            return size;
        }

        void offer(double m, int k) {
            if (size < margin.length) {
                margin[size] = m;
                point[size] = k;
                up(size++);
            } else if (before(m, k, margin[0], point[0])) {
                margin[0] = m;
                point[0] = k;
                down(0);
            }
        }

        /** The kept points by increasing point index. */
        int[] pointsInOrder() {
            int[] out = java.util.Arrays.copyOf(point, size);
            java.util.Arrays.sort(out);
            return out;
        }

        /** Whether (m1, k1) is more violated than (m2, k2). */
        private static boolean before(double m1, int k1, double m2, int k2) {
            return m1 < m2 || m1 == m2 && k1 < k2;
        }

        private void up(int at) {
            while (at > 0) {
                int parent = (at - 1) / 2;
                if (!before(margin[parent], point[parent], margin[at], point[at])) {
                    return;
                }
                swap(at, parent);
                at = parent;
            }
        }

        private void down(int at) {
            while (true) {
                int left = 2 * at + 1;
                int largest = at;
                if (left < size && before(margin[largest], point[largest], margin[left], point[left])) {
                    largest = left;
                }
                int right = left + 1;
                if (right < size && before(margin[largest], point[largest], margin[right], point[right])) {
                    largest = right;
                }
                if (largest == at) {
                    return;
                }
                swap(at, largest);
                at = largest;
            }
        }

        private void swap(int a, int b) {
            double m = margin[a];
            margin[a] = margin[b];
            margin[b] = m;
            int k = point[a];
            point[a] = point[b];
            point[b] = k;
        }
    }
}
