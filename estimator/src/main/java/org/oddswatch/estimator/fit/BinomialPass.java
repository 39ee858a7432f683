package org.oddswatch.estimator.fit;

/**
 * One pass over the grouped rows at a coefficient vector (row by row, or summed per
 * {@link IndicatorGroups indicator group} when the design allows): the binomial log-likelihood, the score
 * {@code U = X'(y - n mu)} and the information {@code I = X' diag(n mu (1-mu)) X}; for Firth fits
 * {@link #addFirthCorrection} adds the hat-value correction {@code sum_i x_i h_i (1/2 - mu_i)} to the
 * score, with {@code h_i = w_i x_i' I^-1 x_i} (from moments summed in the same pass when grouped, by a
 * second pass otherwise). This is the hot loop: flat arrays, indexed loops, zero design
 * entries skipped, one {@code exp} and one {@code log} per row. With {@code e = exp(-|eta|)} in
 * (0, 1], {@code log(1 + e^eta) = max(eta, 0) + log(1 + e)}; {@code Math.log(1 + e)} is used rather
 * than {@code Math.log(1 + e)} (which has no JIT intrinsic and is several times slower); its absolute
 * error is below 2.3e-16 per row.
 */
final class BinomialPass {

    final int p;
    final double[] beta;
    double logLikelihood;
    double logDeterminant = Double.NaN;
    /** Objective: the log-likelihood, plus 0.5 log det I for Firth. */
    double objective;
    /** Score (Firth-modified after {@link #addFirthCorrection}). */
    final double[] score;
    /** Information, full symmetric, row-major p x p. */
    final double[] information;
    /** Cholesky factor of the information, or null when not positive definite. */
    double[] factor;
    double maxAbsEta;
    /**
     * Grouped Firth passes only: per group the moments of {@code k_i = w_i (1/2 - mu_i)} over the rows'
     * numeric values, {@code sum k}, {@code sum k z_a}, {@code sum k z_a z_b} and {@code sum k z_a z_b z_c}
     * (index tuples ascending), from which {@link #addFirthCorrection} forms the correction without
     * another pass over the rows.
     */
    private double[] k0;
    private double[] k1;
    private double[] k2;
    private double[] k3;

    private BinomialPass(int p, double[] beta) {
        this.p = p;
        this.beta = beta;
        this.score = new double[p];
        this.information = new double[p * p];
    }

    /** Evaluates the likelihood quantities at {@code beta} (kept, not copied). */
    static BinomialPass at(FitProblem problem, IndicatorGroups groups, double[] beta, boolean penalized) {
        int p = problem.columns();
        BinomialPass pass = new BinomialPass(p, beta);
        if (groups == null) {
            pass.accumulate(problem);
        } else {
            pass.accumulateGrouped(problem, groups, penalized);
        }
        double[] f = pass.information.clone();
        if (DenseCholesky.decompose(f, p)) {
            pass.factor = f;
            pass.logDeterminant = DenseCholesky.logDeterminant(f, p);
        }
        if (penalized) {
            pass.objective = pass.factor == null ? Double.NEGATIVE_INFINITY
                    : pass.logLikelihood + 0.5 * pass.logDeterminant;
        } else {
            pass.objective = pass.logLikelihood;
        }
        if (!Double.isFinite(pass.objective)) {
            pass.objective = Double.NEGATIVE_INFINITY;
        }
        return pass;
    }

    private void accumulate(FitProblem problem) {
        final int n = problem.rows();
        final double[] x = problem.x();
        final double[] trials = problem.trials();
        final double[] positives = problem.positives();
        final double[] offset = problem.offset();
        final double[] u = score;
        final double[] info = information;
        final int[] nz = new int[p];
        final double[] v = new double[p];
        double ll = 0;
        double etaMax = 0;
        for (int i = 0; i < n; i++) {
            final double t = trials[i];
            if (t == 0) {
                continue;
            }
            final int base = i * p;
            double eta = offset == null ? 0 : offset[i];
            int m = 0;
            for (int j = 0; j < p; j++) {
                final double xj = x[base + j];
                if (xj != 0) {
                    eta += xj * beta[j];
                    nz[m] = j;
                    v[m++] = xj;
                }
            }
            final double e = Math.exp(-Math.abs(eta));
            final double mu = eta >= 0 ? 1 / (1 + e) : e / (1 + e);
            final double y = positives[i];
            ll += y * eta - t * (Math.max(eta, 0) + Math.log(1 + e));
            final double w = t * e / ((1 + e) * (1 + e));
            final double r = y - t * mu;
            if (Math.abs(eta) > etaMax) {
                etaMax = Math.abs(eta);
            }
            for (int a = 0; a < m; a++) {
                final double va = v[a];
                u[nz[a]] += va * r;
                final double wx = w * va;
                final int row = nz[a] * p;
                for (int b = a; b < m; b++) {
                    info[row + nz[b]] += wx * v[b];
                }
            }
        }
        mirrorUpper(info, p);
        logLikelihood = ll;
        maxAbsEta = etaMax;
    }

    /** Rows per block whose factors {@code 1 + e} (each in [1, 2]) are multiplied before one log: 2^1000 < 2^1024. */
    private static final int LOG_BLOCK = 1000;

    /**
     * The same quantities as {@link #accumulate}, summed per indicator group first. Per row:
     * {@code eta = offset + etaGroup[g] + z.b}, {@code e = exp(-|eta|)}, {@code mu = 1/(1+e)} or
     * {@code e/(1+e)}, {@code w = t e/(1+e)^2}, {@code r = y - t mu}, and the log-likelihood
     * {@code y eta - t (max(eta, 0) + log(1 + e))}. One exp and one division per row; for single-event
     * rows the factors {@code 1 + e} are multiplied in blocks of {@link #LOG_BLOCK} and logged once per
     * block (relative error below 1.2e-13 per block, far below the rounding of the sum itself).
     */
    private void accumulateGrouped(FitProblem problem, IndicatorGroups groups, boolean firth) {
        final int n = problem.rows();
        final int q = groups.q;
        final int gCount = groups.groupCount;
        final int[] group = groups.group;
        final double[] z = groups.z;
        final double[] trials = problem.trials();
        final double[] positives = problem.positives();
        final double[] offset = problem.offset();
        final double[] etaGroup = new double[gCount];
        for (int g = 0; g < gCount; g++) {
            double s = 0;
            for (int j : groups.members[g]) {
                s += beta[j];
            }
            etaGroup[g] = s;
        }
        final double[] bq = new double[q];
        for (int a = 0; a < q; a++) {
            bq[a] = beta[groups.numericColumns[a]];
        }
        final double[] sw = new double[gCount];
        final double[] sr = new double[gCount];
        final double[] swz = new double[gCount * q];
        final double[] srz = new double[gCount * q];
        final double[] swzz = new double[gCount * q * q];
        final double[] m0 = firth ? new double[gCount] : null;
        final double[] m1 = firth ? new double[gCount * q] : null;
        final double[] m2 = firth ? new double[gCount * q * q] : null;
        final double[] m3 = firth ? new double[gCount * q * q * q] : null;
        double ll = 0;
        double logSum = 0;
        double product = 1;
        int inBlock = 0;
        double etaMax = 0;
        final boolean one = q == 1;
        final double b0 = one ? bq[0] : 0;
        final boolean unit = groups.unitTrials;
        for (int i = 0; i < n; i++) {
            final double t = unit ? 1 : trials[i];
            if (t == 0) {
                continue;
            }
            final int g = group[i];
            double eta = (offset == null ? 0 : offset[i]) + etaGroup[g];
            if (one) {
                eta += z[i] * b0;
            } else {
                final int zb = i * q;
                for (int a = 0; a < q; a++) {
                    eta += z[zb + a] * bq[a];
                }
            }
            final double abs = Math.abs(eta);
            final double e = Math.exp(-abs);
            final double onePlus = 1 + e;
            final double inv = 1 / onePlus;
            final double mu = eta >= 0 ? inv : e * inv;
            final double y = positives[i];
            ll += y * eta - t * Math.max(eta, 0);
            if (t == 1) {
                product *= onePlus;
                if (++inBlock == LOG_BLOCK) {
                    logSum += Math.log(product);
                    product = 1;
                    inBlock = 0;
                }
            } else {
                logSum += t * Math.log(onePlus);
            }
            final double w = t * e * inv * inv;
            final double r = y - t * mu;
            if (abs > etaMax) {
                etaMax = abs;
            }
            sw[g] += w;
            sr[g] += r;
            if (one) {
                // q = 1: sum w z, r z and w z^2 per group.
                final double z0 = z[i];
                final double wz = w * z0;
                swz[g] += wz;
                srz[g] += r * z0;
                swzz[g] += wz * z0;
                if (firth) {
                    final double k = w * (0.5 - mu);
                    final double kz = k * z0;
                    final double kzz = kz * z0;
                    m0[g] += k;
                    m1[g] += kz;
                    m2[g] += kzz;
                    m3[g] += kzz * z0;
                }
            } else {
                final int zb = i * q;
                final int gb = g * q;
                for (int a = 0; a < q; a++) {
                    final double za = z[zb + a];
                    swz[gb + a] += w * za;
                    srz[gb + a] += r * za;
                    final double wz = w * za;
                    final int zz = (gb + a) * q;
                    for (int b = a; b < q; b++) {
                        swzz[zz + b] += wz * z[zb + b];
                    }
                }
                if (firth) {
                    addMoments(w * (0.5 - mu), z, zb, q, g, m0, m1, m2, m3);
                }
            }
        }
        ll -= logSum + Math.log(product);
        k0 = m0;
        k1 = m1;
        k2 = m2;
        k3 = m3;
        final double[] u = score;
        final double[] info = information;
        final int[] num = groups.numericColumns;
        for (int g = 0; g < gCount; g++) {
            final int[] m = groups.members[g];
            final int gb = g * q;
            for (int a = 0; a < m.length; a++) {
                u[m[a]] += sr[g];
                for (int b = a; b < m.length; b++) {
                    info[m[a] * p + m[b]] += sw[g];
                }
                for (int c = 0; c < q; c++) {
                    addUpper(info, m[a], num[c], swz[gb + c]);
                }
            }
            for (int c = 0; c < q; c++) {
                u[num[c]] += srz[gb + c];
                for (int d = c; d < q; d++) {
                    addUpper(info, num[c], num[d], swzz[(gb + c) * q + d]);
                }
            }
        }
        mirrorUpper(info, p);
        logLikelihood = ll;
        maxAbsEta = etaMax;
    }

    /** Adds {@code k}, {@code k z_a}, {@code k z_a z_b} and {@code k z_a z_b z_c} (a <= b <= c) to group g's moments. */
    private static void addMoments(double k, double[] z, int zb, int q, int g, double[] m0, double[] m1, double[] m2,
                                   double[] m3) {
        m0[g] += k;
        final int gb = g * q;
        for (int a = 0; a < q; a++) {
            final double ka = k * z[zb + a];
            m1[gb + a] += ka;
            for (int b = a; b < q; b++) {
                final double kab = ka * z[zb + b];
                m2[(gb + a) * q + b] += kab;
                final int base = ((gb + a) * q + b) * q;
                for (int c = b; c < q; c++) {
                    m3[base + c] += kab * z[zb + c];
                }
            }
        }
    }

    private void addUpper(double[] info, int j, int k, double v) {
        IndicatorGroups.addUpper(info, p, j, k, v);
    }

    /** Copies the upper triangle of a row-major p x p matrix into its lower triangle. */
    static void mirrorUpper(double[] m, int p) {
        for (int j = 0; j < p; j++) {
            for (int k = 0; k < j; k++) {
                m[j * p + k] = m[k * p + j];
            }
        }
    }

    /**
     * Adds Firth's correction to the score: {@code sum_i x_i h_i (1/2 - mu_i)} with
     * {@code h_i = w_i x_i' I^-1 x_i}. Needs the factor. With an indicator grouping the quadratic form
     * is split as {@code x' A x = m_g' A m_g + 2 z' A_zm m_g + z' A_zz z} (m_g the group's 0/1 pattern,
     * z the row's numeric values, A = I^-1), so the correction is a combination of per-group moments of
     * {@code w (1/2 - mu)} times monomials of z up to degree 3, which the penalized pass has already
     * summed: no second pass over the rows, {@code O(G q^3)} work. Without a grouping a second pass
     * computes each {@code h_i} ({@code O(p^2)} per row).
     */
    void addFirthCorrection(FitProblem problem, IndicatorGroups groups) {
        final double[] inv = DenseCholesky.inverse(factor, p);
        if (groups != null && k0 != null) {
            addFirthCorrectionGrouped(groups, inv);
            return;
        }
        final int n = problem.rows();
        final double[] x = problem.x();
        final double[] trials = problem.trials();
        final double[] offset = problem.offset();
        for (int i = 0; i < n; i++) {
            final double t = trials[i];
            if (t == 0) {
                continue;
            }
            final int base = i * p;
            double eta = offset == null ? 0 : offset[i];
            for (int j = 0; j < p; j++) {
                eta += x[base + j] * beta[j];
            }
            final double e = Math.exp(-Math.abs(eta));
            final double mu = eta >= 0 ? 1 / (1 + e) : e / (1 + e);
            final double w = t * e / ((1 + e) * (1 + e));
            double q = 0;
            for (int j = 0; j < p; j++) {
                final double xj = x[base + j];
                if (xj == 0) {
                    continue;
                }
                double s = 0;
                for (int k = 0; k < p; k++) {
                    s += inv[j * p + k] * x[base + k];
                }
                q += xj * s;
            }
            final double h = w * q;
            final double c = h * (0.5 - mu);
            for (int j = 0; j < p; j++) {
                score[j] += x[base + j] * c;
            }
        }
    }

    /**
     * The grouped correction from the moments of the pass (no further pass over the rows). With
     * {@code A = I^-1}, a row of group g has {@code x' A x = P_g + 2 z.C_g + z' Z z}, where
     * {@code P_g = m_g' A m_g}, {@code C_g = A_zm m_g} and {@code Z = A_zz}; summed with the weights
     * {@code k_i = w_i (1/2 - mu_i)}, the group adds {@code P_g K0 + 2 C_g.K1 + <Z, K2>} to each of its 0/1
     * columns and {@code P_g K1_e + 2 C_g.K2_e + <Z, K3_e>} to numeric column e (K the moments above).
     */
    private void addFirthCorrectionGrouped(IndicatorGroups groups, double[] inv) {
        final int q = groups.q;
        final int[] num = groups.numericColumns;
        final double[] zz = new double[q * q];
        for (int c = 0; c < q; c++) {
            for (int d = 0; d < q; d++) {
                zz[c * q + d] = inv[num[c] * p + num[d]];
            }
        }
        final double[] cross = new double[q];
        for (int g = 0; g < groups.groupCount; g++) {
            final int[] m = groups.members[g];
            final int gb = g * q;
            double pattern = 0;
            java.util.Arrays.fill(cross, 0);
            for (int a : m) {
                for (int b : m) {
                    pattern += inv[a * p + b];
                }
                for (int c = 0; c < q; c++) {
                    cross[c] += inv[num[c] * p + a];
                }
            }
            double sc = pattern * k0[g];
            for (int c = 0; c < q; c++) {
                sc += 2 * cross[c] * k1[gb + c];
                for (int d = 0; d < q; d++) {
                    sc += zz[c * q + d] * k2[moment2(gb, q, c, d)];
                }
            }
            for (int a : m) {
                score[a] += sc;
            }
            for (int e = 0; e < q; e++) {
                double sce = pattern * k1[gb + e];
                for (int c = 0; c < q; c++) {
                    sce += 2 * cross[c] * k2[moment2(gb, q, c, e)];
                    for (int d = 0; d < q; d++) {
                        sce += zz[c * q + d] * k3[moment3(gb, q, c, d, e)];
                    }
                }
                score[num[e]] += sce;
            }
        }
    }

    /** Index of {@code sum k z_a z_b} of the group starting at {@code gb = g q}, stored with a <= b. */
    private static int moment2(int gb, int q, int a, int b) {
        return (gb + Math.min(a, b)) * q + Math.max(a, b);
    }

    /** Index of {@code sum k z_a z_b z_c}, stored with the indices ascending. */
    private static int moment3(int gb, int q, int a, int b, int c) {
        int lo = Math.min(a, Math.min(b, c));
        int hi = Math.max(a, Math.max(b, c));
        int mid = a + b + c - lo - hi;
        return ((gb + lo) * q + mid) * q + hi;
    }

    /** Largest {@code |U_j| / sqrt(I_jj)} over free coordinates (0 where the information is 0). */
    double maxScaledScore(boolean[] fixed) {
        double max = 0;
        for (int j = 0; j < p; j++) {
            if (fixed != null && fixed[j]) {
                continue;
            }
            double d = information[j * p + j];
            double s = d > 0 ? Math.abs(score[j]) / Math.sqrt(d) : Math.abs(score[j]);
            if (!(s <= max)) {
                max = s;
            }
        }
        return max;
    }
}
