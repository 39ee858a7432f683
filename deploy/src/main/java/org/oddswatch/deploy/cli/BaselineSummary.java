package org.oddswatch.deploy.cli;

import java.time.Instant;
import java.util.List;
import java.util.Locale;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.ingest.baseline.BaselineBuilder.BuiltBaseline;

/**
 * What {@code baseline} froze, per stream: the state, the events and positives, the file, and each
 * coefficient as an odds ratio with its standard error of the log odds ratio. Counts from 1 to 4
 * are withheld, and so are the positives when the negatives are 1 to 4 (the report's small-cell rule).
 */
final class BaselineSummary {

    private BaselineSummary() {
    }

    static String describe(BuiltBaseline b, Instant from, Instant to) {
        StringBuilder text = new StringBuilder();
        text.append(b.stream()).append(": ").append(b.state()).append(", ").append(count(b.events()))
                .append(" events, ").append(small(b.positives()) || small(b.events() - b.positives()) ? SmallCellPolicy.DEFAULT.withheldLabel()
                        : Long.toString(b.positives())).append(" positives from ").append(from).append(" to ")
                .append(to);
        text.append(b.file() == null ? ", no file written" : " -> " + b.file()).append('\n');
        if (b.problem() != null) {
            text.append("  why: ").append(b.problem()).append('\n');
        } else if (b.weakness() != null) {
            text.append("  weak: ").append(b.weakness()).append('\n');
        }
        BaselineModel model = b.model();
        if (model != null) {
            List<Column> columns = model.columns();
            for (int j = 1; j < columns.size(); j++) {
                Column c = columns.get(j);
                double se = Math.sqrt(model.covariance()[j][j]);
                text.append(String.format(Locale.ROOT, "  %s: odds ratio %.4g (log-odds SE %.3g)%n",
                        c.level() == null ? c.term() : c.term() + "=" + c.level(), Math.exp(model.coefficients()[j]),
                        se));
            }
        }
        return text.toString();
    }

    private static String count(long n) {
        return small(n) ? SmallCellPolicy.DEFAULT.withheldLabel() : Long.toString(n);
    }

    private static boolean small(long n) {
        return SmallCellPolicy.DEFAULT.small(n);
    }
}
