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
import org.oddswatch.alerts.output.WebhookSink;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.estimator.terms.CategoricalTerm;

/** Reads and validates one element of {@code monitors}. */
final class MonitorReader {

    private static final Pattern NAME = Pattern.compile("[A-Za-z0-9][A-Za-z0-9._-]*");
    /** Kafka's legal topic names. */
    private static final Pattern TOPIC = Pattern.compile("[A-Za-z0-9._-]{1,249}");
    /** Most steps (buckets) per window: {@code width / step}. */
    private static final int MAX_STEPS_PER_WINDOW = 1000;
    private static final int MAX_FUTURE_HOLD = 10_000;
    private static final Set<String> PREVALENCE_INTERVALS = Set.of("wilson", "clopper-pearson", "jeffreys");
    /** Old names of estimate keys, each with the key that replaced it (a definition using one is told). */
    private static final Map<String, String> RENAMED_ESTIMATE_KEYS = Map.of(
            "prevalenceMethod", "prevalenceInterval", "stratumTerm", "stratifyBy");

    private MonitorReader() {
    }

    static MonitorDefinition read(DefNode node, Path definitionDir) throws DefinitionException {
        node.mapping("name", "input", "event", "split", "terms", "window", "estimates", "baseline", "rules",
                "outputs");
        DefNode nameNode = node.require("name");
        String name = nameNode.name();
        nameNode.errorIf(!NAME.matcher(name).matches(),
                "'" + name + "' is not a valid monitor name (letters, digits, '.', '_', '-')");
        String topic = topic(node.require("input").mapping("topic").require("topic"), null);
        EventSpec event = event(node.require("event"));
        DefNode split = node.get("split");
        if (split.present()) {
            split.mapping("field", "maxStreams");
        }
        int maxStreams = split.get("maxStreams").integer(64, v -> v >= 1, "must be at least 1");
        SplitSpec splitSpec = split.present() ? new SplitSpec(split.require("field").pointer(), maxStreams) : null;
        List<TermSpec> terms = TermReader.read(node.get("terms"));
        WindowSpec window = window(node.require("window"));
        EstimateSpec estimates = estimates(node.get("estimates"), terms);
        BaselineSpec baseline = baseline(node.get("baseline"), window, definitionDir);
        List<String> notices = new ArrayList<>();
        AlertRulesConfig rules = RulesReader.read(node.get("rules"), terms, notices);
        return new MonitorDefinition(name, topic, event, splitSpec, terms, window, estimates, baseline, rules,
                outputs(node.get("outputs")), definitionDir, DefinitionChecksum.of(event.outcome(), terms), notices);
    }

    private static EventSpec event(DefNode event) throws DefinitionException {
        event.mapping("id", "time", "maxFutureSkew", "futureConfirm", "futureSpan", "futureHold", "outcome");
        DefNode outcome = event.require("outcome").mapping("field", "positive", "negative");
        List<String> positive = values(outcome.get("positive"), List.of("positive", "true", "1"));
        List<String> negative = values(outcome.get("negative"), List.of("negative", "false", "0"));
        for (String value : positive) {
            outcome.get("negative").errorIf(negative.contains(value),
                    "'" + value + "' is listed as both positive and negative");
        }
        int futureConfirm = event.get("futureConfirm").integer(5, v -> v >= 2,
                "must be at least 2 (one event alone never confirms a new frontier)");
        int futureHold = event.get("futureHold").integer(1000, v -> v >= futureConfirm && v <= MAX_FUTURE_HOLD,
                "must be from futureConfirm (" + futureConfirm + ") to " + MAX_FUTURE_HOLD);
        return new EventSpec(event.require("id").pointer(), event.require("time").pointer(),
                event.get("maxFutureSkew").duration(Duration.ofDays(1), true), futureConfirm,
                event.get("futureSpan").duration(Duration.ofHours(1), true), futureHold,
                new OutcomeSpec(outcome.require("field").pointer(), positive, negative));
    }

    /** One value or a non-empty list of them. */
    private static List<String> values(DefNode node, List<String> fallback) throws DefinitionException {
        if (!node.present()) {
            return fallback;
        }
        List<String> values = node.json().isArray() ? node.texts() : List.of(node.text());
        node.errorIf(values.isEmpty(), "at least one value is needed");
        return values;
    }

    private static WindowSpec window(DefNode window) throws DefinitionException {
        window.mapping("width", "step", "lateness", "align");
        DefNode widthNode = window.require("width");
        Duration width = widthNode.duration(null, false);
        Duration step = window.require("step").duration(null, false);
        String widthStep = "width " + widthNode.text();
        widthNode.errorIf(width.toMillis() % step.toMillis() != 0 || width.compareTo(step) < 0,
                widthStep + " is not a whole multiple of step " + window.get("step").text());
        long steps = width.toMillis() / step.toMillis();
        widthNode.errorIf(steps > MAX_STEPS_PER_WINDOW, widthStep + " is " + steps + " steps of "
                + window.get("step").text() + "; at most " + MAX_STEPS_PER_WINDOW
                + " steps per window are allowed (every window sums that many buckets)");
        DefNode align = window.get("align");
        return new WindowSpec(width, step, window.get("lateness").duration(Duration.ZERO, true),
                align.present() ? align.instant() : Instant.EPOCH);
    }

    private static EstimateSpec estimates(DefNode node, List<TermSpec> terms) throws DefinitionException {
        if (node.present()) {
            for (Map.Entry<String, String> renamed : RENAMED_ESTIMATE_KEYS.entrySet()) {
                node.get(renamed.getKey()).errorIf(node.get(renamed.getKey()).present(),
                        "this key is now called '" + renamed.getValue() + "'; write " + renamed.getValue()
                                + " instead");
            }
            node.mapping("level", "prevalenceInterval", "stratifyBy", "minEventsPerParameter", "testAccuracy",
                    "patternLimit", "profileIntervals");
        }
        double level = node.get("level").number(0.95, v -> v > 0 && v < 1,
                "must be between 0 and 1, for example 0.95");
        DefNode intervalNode = node.get("prevalenceInterval");
        String interval = intervalNode.text("wilson");
        intervalNode.errorIf(!PREVALENCE_INTERVALS.contains(interval),
                "'" + interval + "' is not one of clopper-pearson, jeffreys, wilson");
        DefNode stratifyNode = node.get("stratifyBy");
        String stratifyBy = stratifyNode.optionalName();
        if (stratifyBy != null) {
            TermSpec term = terms.stream().filter(t -> t.name().equals(stratifyBy)).findFirst()
                    .orElseThrow(() -> stratifyNode.error("'" + stratifyBy + "' is not a declared term"));
            stratifyNode.errorIf(!(term.term() instanceof CategoricalTerm),
                    "'" + stratifyBy + "' must be a categorical term");
        }
        double minEvents = node.get("minEventsPerParameter").number(10, v -> v > 0, "must be positive");
        Double sensitivity = null;
        Double specificity = null;
        DefNode accuracy = node.get("testAccuracy");
        if (accuracy.present()) {
            accuracy.mapping("sensitivity", "specificity");
            String proportion = "must be a proportion in (0, 1]";
            sensitivity = accuracy.require("sensitivity").number(0, v -> v > 0 && v <= 1, proportion);
            specificity = accuracy.require("specificity").number(0, v -> v > 0 && v <= 1, proportion);
            accuracy.errorIf(sensitivity + specificity <= 1,
                    "sensitivity + specificity must exceed 1 for the Rogan-Gladen adjustment");
        }
        return new EstimateSpec(level, interval, stratifyBy, minEvents, sensitivity, specificity,
                node.get("patternLimit").integer(4096, v -> v >= 1, "must be at least 1"),
                node.get("profileIntervals").bool(true));
    }

    private static BaselineSpec baseline(DefNode node, WindowSpec window, Path definitionDir)
            throws DefinitionException {
        if (!node.present()) {
            return null;
        }
        node.mapping("from", "to", "file");
        DefNode file = node.get("file");
        if (file.present()) {
            file.errorIf(node.get("from").present() || node.get("to").present(),
                    "give either a fixed period (from, to) or a frozen baseline file, not both");
            BaselineSpec spec = new BaselineSpec(null, null, file.name());
            Path path = spec.fileFor(definitionDir, null);
            file.errorIf(!spec.file().contains("{split}") && !Files.isRegularFile(path),
                    "baseline file " + path + " does not exist");
            return spec;
        }
        DefNode fromNode = node.require("from");
        DefNode toNode = node.require("to");
        Instant from = fromNode.instant();
        Instant to = toNode.instant();
        toNode.errorIf(!from.isBefore(to), "the baseline period must end after it starts (" + from + ")");
        toNode.errorIf(Duration.between(from, to).compareTo(window.step()) < 0,
                "the baseline period is shorter than one window step (" + window.step() + ")");
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
            hook.mapping("url", "timeout", "attempts", "send");
            DefNode urlNode = hook.require("url");
            String url = urlNode.name();
            urlNode.errorIf(!url.startsWith("http://") && !url.startsWith("https://"),
                    "'" + url + "' is not an http:// or https:// address");
            int attempts = hook.get("attempts").integer(4, v -> v >= 1, "must be at least 1");
            DefNode sendNode = hook.get("send");
            String send = sendNode.text("incidents");
            sendNode.errorIf(!send.equals("incidents") && !send.equals("episodes"),
                    "'" + send + "' is not incidents (one message per change of an incident) or episodes (every alert message)");
            webhook = new WebhookSpec(url, hook.get("timeout").duration(Duration.ofSeconds(5), false), attempts,
                    send.equals("episodes") ? WebhookSink.Carries.EPISODES : WebhookSink.Carries.INCIDENTS);
        }
        int withholdBelow = node.get("withholdCountsBelow").integer(SmallCellPolicy.DEFAULT_LIMIT,
                v -> v >= 2 && v <= 1000,
                "must be from 2 to 1000 (counts from 1 to this minus 1 are withheld from every output)");
        return new OutputSpec(topic(node.get("estimatesTopic"), "oddswatch-estimates"),
                topic(node.get("rejectsTopic"), "oddswatch-rejects"),
                topic(node.get("alertsTopic"), "oddswatch-alerts"),
                node.get("estimatesFile").optionalName(), webhook, withholdBelow);
    }

    /** A Kafka topic name, or {@code fallback} when absent. */
    private static String topic(DefNode node, String fallback) throws DefinitionException {
        if (!node.present() && fallback != null) {
            return fallback;
        }
        String topic = node.name();
        node.errorIf(!TOPIC.matcher(topic).matches() || topic.equals(".") || topic.equals(".."),
                "'" + topic + "' is not a valid Kafka topic name (letters, digits, '.', '_', '-')");
        return topic;
    }
}
