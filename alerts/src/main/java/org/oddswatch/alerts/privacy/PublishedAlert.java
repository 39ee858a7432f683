package org.oddswatch.alerts.privacy;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;

/**
 * The JSON of an alert as published (alerts topic, {@code alerts.jsonl}, webhook, live page): the
 * alert as made, whose figures {@link SmallCellAlerts} already left out and listed in
 * {@code withheld} when the estimate of its window withholds them; here in addition, when its
 * {@code events} is a small count under the {@link SmallCellPolicy} (a CUSUM excursion can be a
 * handful of events), that field is left out and heads the {@code withheld} list, as for estimates.
 * Otherwise the alert is written exactly as {@code Json.write(alert)}, so an alert with nothing to
 * withhold is byte for byte what it was before alerts withheld figures. A restart reads such an
 * alert back with {@code events} 0 and the figures absent; the lifecycle uses neither. Written again
 * (the live page after a restart), an alert read back gives the text that was published: one whose
 * {@code withheld} list already names {@code events} is written without {@code events} and with its
 * list as it is.
 */
public final class PublishedAlert {

    private PublishedAlert() {
    }

    /** One line of JSON for every alert output. */
    public static String json(Alert alert, SmallCellPolicy policy) {
        boolean readBack = alert.withheld() != null
                && alert.withheld().stream().anyMatch(w -> "events".equals(w.field()));
        if (!readBack && !policy.small(alert.events())) {
            return Json.write(alert);
        }
        ObjectNode tree = Json.mapper().valueToTree(alert);
        tree.remove("events");
        if (readBack) {
            return Json.write(tree);
        }
        tree.remove("withheld");
        ArrayNode withheld = tree.putArray("withheld");
        withheld.addObject().put("field", "events").put("reason", policy.range("events"));
        if (alert.withheld() != null) {
            alert.withheld().forEach(w -> withheld.addObject().put("field", w.field()).put("reason", w.reason()));
        }
        return Json.write(tree);
    }
}
