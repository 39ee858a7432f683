package org.oddswatch.ingest.definition;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
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
 * SHA-256 of the canonical model part of a monitor: the outcome mapping (field, sorted positive and
 * negative values) and every term's name, field, kind and coding (levels, reference, undeclared
 * policy, catch-all, per), in declaration order, with defaults filled in. Names, windows, rules and
 * outputs are left out: they do not change what a fitted baseline means.
 */
public final class DefinitionChecksum {

    private DefinitionChecksum() {
    }

    public static String of(OutcomeSpec outcome, List<TermSpec> terms) {
        Map<String, Object> canonical = new LinkedHashMap<>();
        Map<String, Object> outcomeMap = new LinkedHashMap<>();
        outcomeMap.put("field", outcome.field().toString());
        outcomeMap.put("positive", new TreeSet<>(outcome.positive()));
        outcomeMap.put("negative", new TreeSet<>(outcome.negative()));
        canonical.put("outcome", outcomeMap);
        List<Object> termList = new ArrayList<>();
        for (TermSpec spec : terms) {
            termList.add(canonical(spec));
        }
        canonical.put("terms", termList);
        return sha256(Json.write(canonical));
    }

    private static Map<String, Object> canonical(TermSpec spec) {
        Map<String, Object> map = new LinkedHashMap<>();
        Term term = spec.term();
        map.put("name", term.name());
        map.put("field", spec.field().toString());
        if (term instanceof BinaryTerm b) {
            map.put("kind", "binary");
            map.put("level", b.level());
            map.put("reference", b.reference());
            map.put("undeclared", b.undeclared().name());
        } else if (term instanceof CategoricalTerm c) {
            map.put("kind", "categorical");
            map.put("levels", c.levels());
            map.put("reference", c.reference());
            map.put("undeclared", c.undeclared().name());
            map.put("catchAll", c.catchAll());
        } else if (term instanceof NumericTerm n) {
            map.put("kind", "numeric");
            map.put("per", n.per());
        }
        return map;
    }

    static String sha256(String text) {
        try {
            byte[] digest = MessageDigest.getInstance("SHA-256").digest(text.getBytes(StandardCharsets.UTF_8));
            StringBuilder hex = new StringBuilder(digest.length * 2);
            for (byte b : digest) {
                hex.append(Character.forDigit((b >> 4) & 0xf, 16)).append(Character.forDigit(b & 0xf, 16));
            }
            return hex.toString();
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required by every Java platform", e);
        }
    }
}
