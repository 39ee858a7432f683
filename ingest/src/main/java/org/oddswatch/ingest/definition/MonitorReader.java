package org.oddswatch.ingest.definition;

import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.terms.CategoricalTerm;

/** Reads and validates one element of {@code monitors}. */
final class MonitorReader {

    private static final Pattern NAME = Pattern.compile("[A-Za-z0-9][A-Za-z0-9._-]*");
    /** Kafka's legal topic names. */
    private static final Pattern TOPIC = Pattern.compile("[A-Za-z0-9._-]{1,249}");
    /** Most steps (buckets) per window: {@code width / step}. */
    static final int MAX_STEPS_PER_WINDOW = 1000;
    /** Most events a stream may hold beyond its horizon ({@code event.futureHold}). */
    static final int MAX_FUTURE_HOLD = 10_000;
    private static final Set<String> PREVALENCE_METHODS = Set.of("wilson", "clopper-pearson", "jeffreys");
    /**
     * Names the estimator's options once had beside the definition keys, each with the one key now
     * used for it everywhere: a definition that uses the old name is told which key replaced it.
     */
    private static final Map<String, String> RENAMED_ESTIMATE_KEYS = Map.of(
            "prevalenceMethod", "prevalenceInterval", "stratumTerm", "stratifyBy");

    private final DefNode node;
    private final Path definitionDir;

    MonitorReader(DefNode node, Path definitionDir) {
        this.node = node;
        this.definitionDir = definitionDir;
    }

    MonitorDefinition read() throws DefinitionException {
        node.mapping("name", "input", "event", "split", "terms", "window", "estimates", "baseline", "rules",
                "outputs");
        DefNode nameNode = node.require("name");
        String name = nameNode.name();
        if (!NAME.matcher(name).matches()) {
            throw nameNode.error("'" + name + "' is not a valid monitor name (letters, digits, '.', '_', '-')");
        }
        DefNode input = node.require("input").mapping("topic");
        String topic = topic(input.require("topic"));
        EventSpec event = event(node.require("event"));
        SplitSpec split = split(node.get("split"));
        List<TermSpec> terms = new TermReader(node.get("terms")).read();
        WindowSpec window = window(node.require("window"));
        EstimateSpec estimates = estimates(node.get("estimates"), terms);
        BaselineSpec baseline = baseline(node.get("baseline"), window);
        List<String> notices = new ArrayList<>();
        AlertRulesConfig rules = RulesReader.read(node.get("rules"), terms, notices);
        OutputSpec outputs = outputs(node.get("outputs"));
        String checksum = DefinitionChecksum.of(event.outcome(), terms);
        return new MonitorDefinition(name, topic, event, split, terms, window, estimates, baseline, rules, outputs,
                definitionDir, checksum, notices);
    }

    private static EventSpec event(DefNode event) throws DefinitionException {
        event.mapping("id", "time", "maxFutureSkew", "futureConfirm", "futureSpan", "futureHold", "outcome");
        DefNode outcome = event.require("outcome").mapping("field", "positive", "negative");
        List<String> positive = values(outcome.get("positive"), List.of("positive", "true", "1"));
        List<String> negative = values(outcome.get("negative"), List.of("negative", "false", "0"));
        for (String value : positive) {
            if (negative.contains(value)) {
                throw outcome.get("negative").error("'" + value + "' is listed as both positive and negative");
            }
        }
        int futureConfirm = event.get("futureConfirm").integer(EventSpec.DEFAULT_FUTURE_CONFIRM);
        if (futureConfirm < 2) {
            throw event.get("futureConfirm").error("must be at least 2 (one event alone never confirms a new frontier)");
        }
        int futureHold = event.get("futureHold").integer(EventSpec.DEFAULT_FUTURE_HOLD);
        if (futureHold < futureConfirm || futureHold > MAX_FUTURE_HOLD) {
            throw event.get("futureHold").error("must be from futureConfirm (" + futureConfirm + ") to "
                    + MAX_FUTURE_HOLD);
        }
        return new EventSpec(event.require("id").pointer(), event.require("time").pointer(),
                DefinitionLoader.notNegative(event.get("maxFutureSkew"), EventSpec.DEFAULT_MAX_FUTURE_SKEW),
                futureConfirm, DefinitionLoader.notNegative(event.get("futureSpan"), EventSpec.DEFAULT_FUTURE_SPAN),
                futureHold, new OutcomeSpec(outcome.require("field").pointer(), positive, negative));
    }

    private static List<String> values(DefNode node, List<String> fallback) throws DefinitionException {
        if (!node.present()) {
            return fallback;
        }
        List<String> values = node.json().isArray() ? node.texts() : List.of(node.text());
        if (values.isEmpty()) {
            throw node.error("at least one value is needed");
        }
        return values;
    }

    private static SplitSpec split(DefNode split) throws DefinitionException {
        if (!split.present()) {
            return null;
        }
        split.mapping("field", "maxStreams");
        int maxStreams = split.get("maxStreams").integer(64);
        if (maxStreams < 1) {
            throw split.get("maxStreams").error("must be at least 1");
        }
        return new SplitSpec(split.require("field").pointer(), maxStreams);
    }

    private static WindowSpec window(DefNode window) throws DefinitionException {
        window.mapping("width", "step", "lateness", "align");
        DefNode widthNode = window.require("width");
        Duration width = DefinitionLoader.positive(widthNode, null);
        Duration step = DefinitionLoader.positive(window.require("step"), null);
        if (width.toMillis() % step.toMillis() != 0 || width.compareTo(step) < 0) {
            throw widthNode.error("width " + widthNode.text() + " is not a whole multiple of step "
                    + window.get("step").text());
        }
        if (width.toMillis() / step.toMillis() > MAX_STEPS_PER_WINDOW) {
            throw widthNode.error("width " + widthNode.text() + " is " + width.toMillis() / step.toMillis()
                    + " steps of " + window.get("step").text() + "; at most " + MAX_STEPS_PER_WINDOW
                    + " steps per window are allowed (every window sums that many buckets)");
        }
        Duration lateness = DefinitionLoader.notNegative(window.get("lateness"), Duration.ZERO);
        Instant align = window.get("align").present() ? window.get("align").instant() : Instant.EPOCH;
        return new WindowSpec(width, step, lateness, align);
    }

    private static EstimateSpec estimates(DefNode node, List<TermSpec> terms) throws DefinitionException {
        if (node.present()) {
            for (Map.Entry<String, String> renamed : RENAMED_ESTIMATE_KEYS.entrySet()) {
                if (node.get(renamed.getKey()).present()) {
                    throw node.get(renamed.getKey()).error("this key is now called '" + renamed.getValue()
                            + "'; write " + renamed.getValue() + " instead");
                }
            }
            node.mapping("level", "prevalenceInterval", "stratifyBy", "minEventsPerParameter", "testAccuracy",
                    "patternLimit", "profileIntervals");
        }
        DefNode levelNode = node.get("level");
        double level = levelNode.number(0.95);
        if (!(level > 0 && level < 1)) {
            throw levelNode.error("must be between 0 and 1, for example 0.95");
        }
        DefNode methodNode = node.get("prevalenceInterval");
        String method = methodNode.text("wilson");
        if (!PREVALENCE_METHODS.contains(method)) {
            throw methodNode.error("'" + method + "' is not one of clopper-pearson, jeffreys, wilson");
        }
        DefNode stratifyNode = node.get("stratifyBy");
        String stratifyBy = stratifyNode.present() ? stratifyNode.name() : null;
        if (stratifyBy != null) {
            TermSpec term = terms.stream().filter(t -> t.name().equals(stratifyBy)).findFirst().orElse(null);
            if (term == null) {
                throw stratifyNode.error("'" + stratifyBy + "' is not a declared term");
            }
            if (!(term.term() instanceof CategoricalTerm)) {
                throw stratifyNode.error("'" + stratifyBy + "' must be a categorical term");
            }
        }
        DefNode epp = node.get("minEventsPerParameter");
        double minEvents = epp.number(10);
        if (!(minEvents > 0)) {
            throw epp.error("must be positive");
        }
        Double sensitivity = null;
        Double specificity = null;
        DefNode accuracy = node.get("testAccuracy");
        if (accuracy.present()) {
            accuracy.mapping("sensitivity", "specificity");
            sensitivity = probability(accuracy.require("sensitivity"));
            specificity = probability(accuracy.require("specificity"));
            if (sensitivity + specificity <= 1) {
                throw accuracy.error("sensitivity + specificity must exceed 1 for the Rogan-Gladen adjustment");
            }
        }
        DefNode limitNode = node.get("patternLimit");
        int patternLimit = limitNode.integer(4096);
        if (patternLimit < 1) {
            throw limitNode.error("must be at least 1");
        }
        return new EstimateSpec(level, method, stratifyBy, minEvents, sensitivity, specificity, patternLimit,
                node.get("profileIntervals").bool(true));
    }

    private static double probability(DefNode node) throws DefinitionException {
        double value = node.number();
        if (!(value > 0 && value <= 1)) {
            throw node.error("must be a proportion in (0, 1]");
        }
        return value;
    }

    private BaselineSpec baseline(DefNode node, WindowSpec window) throws DefinitionException {
        if (!node.present()) {
            return null;
        }
        node.mapping("from", "to", "file");
        DefNode file = node.get("file");
        if (file.present()) {
            if (node.get("from").present() || node.get("to").present()) {
                throw file.error("give either a fixed period (from, to) or a frozen baseline file, not both");
            }
            BaselineSpec spec = new BaselineSpec(null, null, file.name());
            if (!spec.file().contains("{split}")) {
                Path path = spec.fileFor(definitionDir, null);
                if (!Files.isRegularFile(path)) {
                    throw file.error("baseline file " + path + " does not exist");
                }
            }
            return spec;
        }
        DefNode fromNode = node.require("from");
        DefNode toNode = node.require("to");
        Instant from = fromNode.instant();
        Instant to = toNode.instant();
        if (!from.isBefore(to)) {
            throw toNode.error("the baseline period must end after it starts (" + from + ")");
        }
        if (Duration.between(from, to).compareTo(window.step()) < 0) {
            throw toNode.error("the baseline period is shorter than one window step (" + window.step() + ")");
        }
        return new BaselineSpec(from, to, null);
    }

    private static OutputSpec outputs(DefNode node) throws DefinitionException {
        if (node.present()) {
            node.mapping("estimatesTopic", "rejectsTopic", "alertsTopic", "estimatesFile", "webhook",
                    "withholdCountsBelow");
        }
        WebhookSpec webhook = null;
        DefNode hook = node.get("webhook");
        if (hook.present()) {
            hook.mapping("url", "timeout", "attempts");
            DefNode urlNode = hook.require("url");
            String url = urlNode.name();
            if (!url.startsWith("http://") && !url.startsWith("https://")) {
                throw urlNode.error("'" + url + "' is not an http:// or https:// address");
            }
            int attempts = hook.get("attempts").integer(4);
            if (attempts < 1) {
                throw hook.get("attempts").error("must be at least 1");
            }
            webhook = new WebhookSpec(url, DefinitionLoader.positive(hook.get("timeout"), Duration.ofSeconds(5)),
                    attempts);
        }
        DefNode file = node.get("estimatesFile");
        DefNode below = node.get("withholdCountsBelow");
        int withholdBelow = below.integer(SmallCellPolicy.DEFAULT_LIMIT);
        if (withholdBelow < 2 || withholdBelow > 1000) {
            throw below.error("must be from 2 to 1000 (counts from 1 to this minus 1 are withheld from every output)");
        }
        return new OutputSpec(topic(node.get("estimatesTopic"), "oddswatch-estimates"),
                topic(node.get("rejectsTopic"), "oddswatch-rejects"), topic(node.get("alertsTopic"), "oddswatch-alerts"),
                file.present() ? file.name() : null, webhook, withholdBelow);
    }

    private static String topic(DefNode node, String fallback) throws DefinitionException {
        return node.present() ? topic(node) : fallback;
    }

    private static String topic(DefNode node) throws DefinitionException {
        String topic = node.name();
        if (!TOPIC.matcher(topic).matches() || topic.equals(".") || topic.equals("..")) {
            throw node.error("'" + topic + "' is not a valid Kafka topic name (letters, digits, '.', '_', '-')");
        }
        return topic;
    }

    /** Duplicate-name guard shared with {@link TermReader}. */
    static void requireUnique(Set<String> seen, String name, DefNode where, String what) throws DefinitionException {
        if (!seen.add(name)) {
            throw where.error(what + " '" + name + "' is declared twice");
        }
    }
}
