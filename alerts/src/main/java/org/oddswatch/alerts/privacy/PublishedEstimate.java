package org.oddswatch.alerts.privacy;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.LinkedHashMap;
import java.util.Map;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The JSON of a window estimate as published (estimates topic and {@code estimates.jsonl}): the
 * estimate JSON with the fields {@link SmallCellPolicy} withholds left out, and a {@code withheld}
 * list naming each left-out field and the reason, for example
 * {@code "withheld":[{"field":"cases","reason":"positives from 1 to 4"}, ...]}. The chart values
 * ({@code drift}, {@code cusum} and {@code stepCusum}) are statistics, not counts, but they rest on the window's
 * events: when the window's counts are withheld, so are they. An estimate with
 * nothing to withhold is written exactly as {@code Json.write(estimate)}, byte for byte.
 * Deterministic: the same estimate and limit give the same text.
 */
public final class PublishedEstimate {

    private PublishedEstimate() {
    }

    /** One line of JSON for the estimates topic or file. */
    public static String json(WindowEstimate estimate, SmallCellPolicy policy) {
        SmallCellPolicy.Withheld w = policy.assess(estimate);
        if (w.none()) {
            return Json.write(estimate);
        }
        ObjectNode tree = Json.mapper().valueToTree(estimate);
        Map<String, String> withheld = new LinkedHashMap<>();
        if (w.events() != null) {
            withheld.put("events", w.events());
            tree.remove("events");
        }
        if (w.cases() != null) {
            for (String field : new String[] {"cases", "prevalence", "coefficients", "notes", "drift", "cusum",
                    "stepCusum"}) {
                if (tree.remove(field) != null) {
                    withheld.put(field, w.cases());
                }
            }
            if (tree.get("fit") instanceof ObjectNode fit) {
                String[] fields = w.events() != null ? new String[] {"events", "logLikelihood", "nullLogLikelihood"}
                        : new String[] {"logLikelihood", "nullLogLikelihood"};
                for (String field : fields) {
                    if (fit.remove(field) != null) {
                        withheld.put("fit." + field, w.cases());
                    }
                }
            }
        }
        if (tree.get("strata") instanceof ArrayNode strata) {
            for (int i = 0; i < strata.size(); i++) {
                if (w.stratum(i) && strata.get(i) instanceof ObjectNode stratum) {
                    stratum.remove(java.util.List.of("events", "cases", "value", "lower", "upper"));
                    withheld.put("strata[" + i + "]", w.strata().get(i));
                }
            }
        }
        if (w.calibration() != null && tree.remove("calibration") != null) {
            withheld.put("calibration", w.calibration());
        }
        ArrayNode list = tree.putArray("withheld");
        withheld.forEach((field, reason) -> list.addObject().put("field", field).put("reason", reason));
        return Json.write(tree);
    }
}
