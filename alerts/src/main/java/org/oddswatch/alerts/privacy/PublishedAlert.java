package org.oddswatch.alerts.privacy;

import com.fasterxml.jackson.databind.node.ObjectNode;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;

/**
 * The JSON of an alert as published (alerts topic, {@code alerts.jsonl}, webhook, log): when its
 * {@code events} is a small count under the {@link SmallCellPolicy} (a CUSUM excursion can be a
 * handful of events), the field is left out and a {@code withheld} list names it and the reason, as
 * for estimates. Otherwise the alert is written exactly as {@code Json.write(alert)}. A restart reads
 * such an alert back with {@code events} 0; the lifecycle does not use it.
 */
public final class PublishedAlert {

    private PublishedAlert() {
    }

    /** One line of JSON for every alert output. */
    public static String json(Alert alert, SmallCellPolicy policy) {
        if (!policy.small(alert.events())) {
            return Json.write(alert);
        }
        ObjectNode tree = Json.mapper().valueToTree(alert);
        tree.remove("events");
        tree.putArray("withheld").addObject().put("field", "events").put("reason", "events from 1 to "
                + (policy.limit() - 1));
        return Json.write(tree);
    }
}
