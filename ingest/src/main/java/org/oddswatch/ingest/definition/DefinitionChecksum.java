package org.oddswatch.ingest.definition;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;
import java.util.List;
import java.util.TreeSet;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.NumericTerm;

/**
 * SHA-256 (hex) of the model part of a monitor, as compact JSON: the outcome (field, sorted positive
 * and negative values) and every term's name, field, kind and coding (levels, reference, undeclared
 * policy, catch-all when set, per), in declaration order, defaults filled in. Names, windows, rules
 * and outputs are left out: they do not change what a fitted baseline means.
 */
final class DefinitionChecksum {

    private DefinitionChecksum() {
    }

    static String of(OutcomeSpec outcome, List<TermSpec> terms) {
        ObjectNode canonical = Json.mapper().createObjectNode();
        canonical.putObject("outcome").put("field", outcome.field().toString())
                .putPOJO("positive", new TreeSet<>(outcome.positive()))
                .putPOJO("negative", new TreeSet<>(outcome.negative()));
        ArrayNode list = canonical.putArray("terms");
        for (TermSpec spec : terms) {
            ObjectNode term = list.addObject().put("name", spec.name())
                    .put("field", spec.field().toString());
            if (spec.term() instanceof BinaryTerm b) {
                term.put("kind", "binary").put("level", b.level()).put("reference", b.reference())
                        .put("undeclared", b.undeclared().name());
            } else if (spec.term() instanceof CategoricalTerm c) {
                term.put("kind", "categorical").putPOJO("levels", c.levels()).put("reference", c.reference())
                        .put("undeclared", c.undeclared().name());
                if (c.catchAll() != null) {
                    term.put("catchAll", c.catchAll());
                }
            } else if (spec.term() instanceof NumericTerm n) {
                term.put("kind", "numeric").put("per", n.per());
            }
        }
        try {
            byte[] json = Json.write(canonical).getBytes(StandardCharsets.UTF_8);
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(json));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required by every Java platform", e);
        }
    }
}
