package org.oddswatch.estimator.calibration;

/**
 * The Hosmer–Lemeshow statistic over risk groups of individuals, grouping as documented in
 * {@link CalibrationStatistics}: risk level m of {@link RiskLevels} (ascending, risks tied within
 * {@link RiskLevels#TIE_TOLERANCE} on the log-odds scale; cumulative count C_m of N) closes
 * a group exactly when {@code floor(G C_m / N) > floor(G C_(m-1) / N)}, i.e. when some cut point
 * {@code Q(k/G)} equals its risk. Counts are compared in exact integer arithmetic.
 *
 * @param statistic the chi-square statistic, or null when a group has {@code E_k (1 - E_k/n_k) = 0}
 * @param groups the number of groups formed
 * @param p upper-tail chi-square probability with groups - 2 degrees of freedom, or null when
 *     fewer than 3 groups
 */
record HosmerLemeshow(Double statistic, Integer groups, Double p) {

    static HosmerLemeshow of(RiskLevels levels, double totalTrials, int targetGroups) {
        long total = Math.round(totalTrials);
        long cumulative = 0;
        double observed = 0;
        double expected = 0;
        double size = 0;
        double statistic = 0;
        boolean degenerate = false;
        int groups = 0;
        for (int m = 0; m < levels.count(); m++) {
            long count = Math.round(levels.positives[m] + levels.negatives[m]);
            long before = cumulative;
            cumulative += count;
            observed += levels.positives[m];
            expected += levels.expected[m];
            size += count;
            boolean closes = targetGroups * cumulative / total > targetGroups * before / total
                    || m == levels.count() - 1;
            if (closes) {
                double variance = expected * (1 - expected / size);
                if (variance > 0) {
                    statistic += (observed - expected) * (observed - expected) / variance;
                } else {
                    degenerate = true;
                }
                groups++;
                observed = 0;
                expected = 0;
                size = 0;
            }
        }
        Double stat = degenerate ? null : CalibrationStatistics.finite(statistic);
        Double p = stat == null || groups < 3 ? null
                : CalibrationStatistics.finite(CalibrationStatistics.chiSquareUpperTail(stat, groups - 2));
        return new HosmerLemeshow(stat, groups, p);
    }
}
