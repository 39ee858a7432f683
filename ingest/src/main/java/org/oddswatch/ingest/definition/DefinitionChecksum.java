package org.oddswatch.ingest.definition;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeSet;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.terms.Term;

/**
 * SHA-256 (hex) of the model part of a monitor, as compact JSON: the outcome (field, sorted positive
 * and negative values) and every term's name, field, kind and coding (levels, reference, undeclared
 * policy, catch-all, per), in declaration order, defaults filled in. Names, windows, rules and
 * outputs are left out: they do not change what a fitted baseline means.
 */
final class DefinitionChecksum {

    private DefinitionChecksum() {
    }

    static String of(OutcomeSpec outcome, List<TermSpec> terms) {
        Map<String, Object> canonical = new LinkedHashMap<>();
        canonical.put("outcome", ordered("field", outcome.field().toString(),
                "positive", new TreeSet<>(outcome.positive()), "negative", new TreeSet<>(outcome.negative())));
        canonical.put("terms", terms.stream().map(DefinitionChecksum::canonical).toList());
        try {
            byte[] json = Json.write(canonical).getBytes(StandardCharsets.UTF_8);
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(json));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required by every Java platform", e);
        }
    }

    private static Map<String, Object> canonical(TermSpec spec) {
        Term term = spec.term();
        Map<String, Object> map = ordered("name", term.name(), "field", spec.field().toString());
        if (term instanceof BinaryTerm b) {
            map.putAll(ordered("kind", "binary", "level", b.level(), "reference", b.reference(),
                    "undeclared", b.undeclared().name()));
        } else if (term instanceof CategoricalTerm c) {
            map.putAll(ordered("kind", "categorical", "levels", c.levels(), "reference", c.reference(),
                    "undeclared", c.undeclared().name(), "catchAll", c.catchAll()));
        } else if (term instanceof NumericTerm n) {
            map.putAll(ordered("kind", "numeric", "per", n.per()));
        }
        return map;
    }

    /** A map of the given key, value pairs in their order (values may be null; the writer leaves those out). */
    private static Map<String, Object> ordered(Object... keysAndValues) {
        Map<String, Object> map = new LinkedHashMap<>();
        for (int i = 0; i < keysAndValues.length; i += 2) {
            map.put((String) keysAndValues[i], keysAndValues[i + 1]);
        }
        return map;
    }
}
