package org.oddswatch.deploy.scenario;

import java.time.Duration;
import java.time.Instant;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Spliterator;
import java.util.Spliterators;
import java.util.stream.Stream;
import java.util.stream.StreamSupport;

/**
 * A simulated regional respiratory-illness testing programme: tested people from five clinics in two
 * regions, with household contact, recent travel, age band and sex, outcomes drawn from a documented
 * logistic {@link TruthModel} over a documented {@link Population}, and optional scripted changes.
 *
 * <pre>{@code
 * Scenario s = Scenario.respiratory(ScenarioOptions.defaults().withSeed(42));
 * try (Stream<ScenarioEvent> events = s.events()) {
 *     events.map(ScenarioEvent::toJson).forEach(System.out::println);
 * }
 * }</pre>
 *
 * <p>Scenarios (see {@code deploy/SCENARIOS.md}):
 * <ul>
 *   <li>{@code respiratory}: the truth model for the first 16 weeks; from week 16 the odds ratio of
 *       household contact doubles (2.5 to 5.0); from week 26 every probability is multiplied by 1.3,
 *       a prevalence rise the baseline model does not expect;</li>
 *   <li>{@code steady}: the truth model throughout, for false-alarm studies.</li>
 * </ul>
 * Weeks count from {@link ScenarioOptions#start()}; the first {@value #BASELINE_WEEKS} weeks are the
 * intended baseline period. Deterministic: same options, same records.
 */
public final class Scenario implements Iterable<ScenarioEvent> {

    public static final String RESPIRATORY = "respiratory";
    public static final String STEADY = "steady";
    /** Length of the intended fixed baseline period, from the start. */
    public static final int BASELINE_WEEKS = 12;
    /** When the respiratory script doubles the household-contact odds ratio. */
    public static final Duration OR_DOUBLING_AFTER = Duration.ofDays(7 * 16);
    /** When the respiratory script raises every probability by 30 %. */
    public static final Duration PREVALENCE_RISE_AFTER = Duration.ofDays(7 * 26);

    private final String name;
    private final ScenarioOptions options;
    private final List<ScriptedChange> changes;

    private Scenario(String name, ScenarioOptions options, List<ScriptedChange> defaultChanges) {
        this.name = name;
        this.options = options;
        this.changes = options.changes() == null ? defaultChanges : options.changes();
    }

    /** The house scenario with its drift script (unless the options carry their own). */
    public static Scenario respiratory(ScenarioOptions options) {
        return new Scenario(RESPIRATORY, options, List.of(
                ScriptedChange.oddsRatio("household_contact", "yes", 2.0, OR_DOUBLING_AFTER),
                ScriptedChange.prevalence(1.3, PREVALENCE_RISE_AFTER)));
    }

    /** The house scenario without any change (unless the options carry changes). */
    public static Scenario steady(ScenarioOptions options) {
        return new Scenario(STEADY, options, List.of());
    }

    /** By name, as on the command line: {@code respiratory} or {@code steady}. */
    public static Scenario named(String name, ScenarioOptions options) {
        return switch (name.toLowerCase(Locale.ROOT)) {
            case RESPIRATORY -> respiratory(options);
            case STEADY -> steady(options);
            default -> throw new IllegalArgumentException(
                    "unknown scenario '" + name + "' (known: " + String.join(", ", names()) + ")");
        };
    }

    public static List<String> names() {
        return List.of(RESPIRATORY, STEADY);
    }

    public String name() {
        return name;
    }

    public ScenarioOptions options() {
        return options;
    }

    /** The scripted changes in force for this feed (possibly empty). */
    public List<ScriptedChange> changes() {
        return changes;
    }

    /** Prefix of event ids: {@code rsp-} (respiratory) or {@code std-} (steady). */
    public String idPrefix() {
        return name.equals(STEADY) ? "std-" : "rsp-";
    }

    /** Simulated time at which a change takes effect. */
    public Instant changeTime(ScriptedChange change) {
        return options.start().plus(change.after());
    }

    /** Exclusive end of the intended baseline period: start + {@value #BASELINE_WEEKS} weeks. */
    public Instant baselineEnd() {
        return options.start().plus(Duration.ofDays(7L * BASELINE_WEEKS));
    }

    /** All records in emission order, lazily; the stream ends with the simulated span. */
    public Stream<ScenarioEvent> events() {
        return StreamSupport.stream(Spliterators.spliteratorUnknownSize(iterator(),
                Spliterator.ORDERED | Spliterator.NONNULL), false);
    }

    @Override
    public Iterator<ScenarioEvent> iterator() {
        return new ScenarioFeed(this);
    }

    /**
     * The true odds ratio of {@code term = level} against its reference at simulated time {@code at}:
     * exp(coefficient) times the factors of the odds-ratio changes in force.
     */
    public double trueOddsRatio(String term, String level, Instant at) {
        double or = Math.exp(TruthModel.coefficient(term, level));
        for (ScriptedChange c : changes) {
            if (c.kind() == ScriptedChange.Kind.ODDS_RATIO && c.term().equals(term)
                    && java.util.Objects.equals(c.level(), level) && !at.isBefore(changeTime(c))) {
                or *= c.factor();
            }
        }
        return or;
    }

    /** The true probability of a positive result for {@code person} at {@code at}. */
    public double trueProbability(ScenarioEvent.Person person, Instant at) {
        double eta = TruthModel.logOdds(person);
        double multiplier = 1;
        String[] indicators = TruthModel.indicators(person);
        for (ScriptedChange c : changes) {
            if (at.isBefore(changeTime(c))) {
                continue;
            }
            if (c.kind() == ScriptedChange.Kind.PREVALENCE) {
                multiplier *= c.factor();
            } else {
                String key = TruthModel.key(c.term(), c.level());
                for (String k : indicators) {
                    if (k.equals(key)) {
                        eta += Math.log(c.factor());
                    }
                }
            }
        }
        return Math.min(1.0, TruthModel.logistic(eta) * multiplier);
    }

    /**
     * The expected share of positives among clean events at {@code at}: the exact sum of
     * share x probability over all 2 x 2 x 4 x 2 x 5 attribute combinations of the {@link Population}.
     */
    public double expectedPrevalence(Instant at) {
        double sum = 0;
        for (int h = 0; h < 2; h++) {
            for (int t = 0; t < 2; t++) {
                double ph = h == 1 ? Population.HOUSEHOLD_SHARE : 1 - Population.HOUSEHOLD_SHARE;
                double pt = t == 1 ? Population.TRAVEL_SHARE : 1 - Population.TRAVEL_SHARE;
                for (String age : Population.AGE_BANDS.levels()) {
                    for (String sex : Population.SEXES.levels()) {
                        for (String clinic : Population.CLINICS.levels()) {
                            double share = ph * pt * Population.AGE_BANDS.share(age) * Population.SEXES.share(sex)
                                    * Population.CLINICS.share(clinic);
                            ScenarioEvent.Person p = new ScenarioEvent.Person(h == 1, t == 1, age, sex, clinic,
                                    Population.regionOf(clinic));
                            sum += share * trueProbability(p, at);
                        }
                    }
                }
            }
        }
        return sum;
    }

    /** A few plain lines: the scenario, its span and rate, the baseline period and the script. */
    public String describe() {
        StringBuilder b = new StringBuilder();
        b.append("scenario ").append(name).append(": regional respiratory-illness testing programme (simulated)\n");
        b.append("  span ").append(options.start()).append(" to ").append(options.end())
                .append(", about ").append(Math.round(options.eventsPerWeek())).append(" events a week, seed ")
                .append(options.seed()).append('\n');
        b.append("  baseline period ").append(options.start()).append(" to ").append(baselineEnd())
                .append(String.format(Locale.ROOT, ", expected prevalence %.4f%n", expectedPrevalence(options.start())));
        if (changes.isEmpty()) {
            b.append("  no scripted change\n");
        }
        for (ScriptedChange c : changes) {
            Instant at = changeTime(c);
            b.append("  ").append(at).append(": ").append(c.describe())
                    .append(String.format(Locale.ROOT, "; expected prevalence afterwards %.4f%n", expectedPrevalence(at)));
        }
        if (options.defectShare() > 0) {
            b.append(String.format(Locale.ROOT, "  %.1f %% extra defective records (malformed, late, duplicate)%n",
                    100 * options.defectShare()));
        }
        return b.toString();
    }
}
