package org.oddswatch.ingest.definition;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.regex.Pattern;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.Column;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.terms.Term;
import org.oddswatch.estimator.terms.UndeclaredLevelPolicy;

/** Reads the {@code terms} list of a monitor: structured terms, never a formula string. */
final class TermReader {

    private static final Pattern NAME = Pattern.compile("[A-Za-z_][A-Za-z0-9_]*");

    private TermReader() {
    }

    static List<TermSpec> read(DefNode node) throws DefinitionException {
        List<TermSpec> terms = new ArrayList<>();
        if (!node.present()) {
            return terms;
        }
        node.errorIf(node.json().isTextual(), "terms are a list of mappings (name, field, kind, ...), not a formula");
        Set<String> names = new HashSet<>();
        for (DefNode element : node.elements()) {
            TermSpec term = term(element);
            element.get("name").errorIf(!names.add(term.name()), "term '" + term.name() + "' is declared twice");
            terms.add(term);
        }
        return terms;
    }

    private static TermSpec term(DefNode element) throws DefinitionException {
        element.errorIf(!element.json().isObject(), "expected a mapping with name, field and kind");
        DefNode kindNode = element.require("kind");
        String kind = kindNode.text().toLowerCase(Locale.ROOT);
        switch (kind) {
            case "binary" -> element.mapping("name", "field", "kind", "level", "reference", "undeclared", "watched");
            case "categorical" -> element.mapping("name", "field", "kind", "levels", "reference", "undeclared",
                    "catchAll", "watched");
            case "numeric" -> element.mapping("name", "field", "kind", "per", "watched");
            default -> throw kindNode.error("'" + kindNode.text() + "' is not one of binary, categorical, numeric");
        }
        DefNode nameNode = element.require("name");
        String name = nameNode.name();
        nameNode.errorIf(!NAME.matcher(name).matches(),
                "'" + name + "' is not a valid term name (letters, digits and '_', not starting with a digit)");
        nameNode.errorIf(name.equals(Column.INTERCEPT), "'intercept' is reserved for the constant term");
        var field = element.require("field").pointer();
        boolean watched = element.get("watched").bool(false);
        Term term = switch (kind) {
            case "binary" -> binary(element, name, watched);
            case "categorical" -> categorical(element, name, watched);
            default -> numeric(element.get("per"), name, watched);
        };
        return new TermSpec(field, term);
    }

    private static Term numeric(DefNode per, String name, boolean watched) throws DefinitionException {
        return new NumericTerm(name, per.number(1.0, v -> v > 0 && !Double.isInfinite(v), "must be a positive number"),
                watched);
    }

    private static Term binary(DefNode element, String name, boolean watched) throws DefinitionException {
        String level = element.get("level").text("yes");
        DefNode referenceNode = element.get("reference");
        String reference = referenceNode.text("no");
        if (level.equals(reference)) {
            throw referenceNode.present() ? referenceNode.error("reference must differ from level '" + level + "'")
                    : element.get("level").error("level must differ from the reference 'no'");
        }
        UndeclaredLevelPolicy policy = policy(element.get("undeclared"));
        element.get("undeclared").errorIf(policy == UndeclaredLevelPolicy.POOL,
                "pool is for categorical terms; use reject or missing");
        return new BinaryTerm(name, level, reference, policy, watched);
    }

    private static Term categorical(DefNode element, String name, boolean watched) throws DefinitionException {
        DefNode levelsNode = element.require("levels");
        List<String> levels = new ArrayList<>();
        for (DefNode levelNode : levelsNode.elements()) {
            String level = levelNode.text();
            levelNode.errorIf(levels.contains(level), "level '" + level + "' is declared twice");
            levels.add(level);
        }
        levelsNode.errorIf(levels.size() < 2, "a categorical term needs at least two levels");
        DefNode referenceNode = element.require("reference");
        String reference = referenceNode.text();
        referenceNode.errorIf(!levels.contains(reference),
                "level '" + reference + "' is not one of the declared levels");
        DefNode undeclaredNode = element.get("undeclared");
        UndeclaredLevelPolicy policy = policy(undeclaredNode);
        DefNode catchAllNode = element.get("catchAll");
        String catchAll = catchAllNode.text(null);
        if (policy == UndeclaredLevelPolicy.POOL) {
            undeclaredNode.errorIf(catchAll == null, "pool needs a catchAll level");
            catchAllNode.errorIf(!levels.contains(catchAll),
                    "level '" + catchAll + "' is not one of the declared levels");
        } else {
            catchAllNode.errorIf(catchAll != null, "catchAll is only used with undeclared: pool");
        }
        return new CategoricalTerm(name, levels, reference, policy, catchAll, watched);
    }

    private static UndeclaredLevelPolicy policy(DefNode node) throws DefinitionException {
        String text = node.text("reject");
        return switch (text) {
            case "reject" -> UndeclaredLevelPolicy.REJECT;
            case "missing" -> UndeclaredLevelPolicy.MISSING;
            case "pool" -> UndeclaredLevelPolicy.POOL;
            default -> throw node.error("'" + text + "' is not one of reject, missing, pool");
        };
    }
}
