package org.oddswatch.alerts.report.html;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;

/**
 * Rejected and late records of one stream counted by reason per window step: a record with event
 * time {@code t} counts at the first window end after {@code t} ({@code end[i-1] <= t < end[i]};
 * earlier times count at the first end). Records after the last window end, and records whose time
 * could not be read, are counted by reason apart.
 */
final class RejectBuckets {

    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    private RejectBuckets() {
    }

    static ObjectNode of(long[] windowEnds, List<RejectMark> rejects) {
        Map<String, long[]> counts = new TreeMap<>();
        Map<String, Long> after = new TreeMap<>();
        Map<String, Long> untimed = new TreeMap<>();
        for (RejectMark r : rejects) {
            String reason = r.reason() == null ? "unknown" : r.reason();
            if (r.time() == null || windowEnds.length == 0) {
                untimed.merge(reason, 1L, Long::sum);
                continue;
            }
            int i = Arrays.binarySearch(windowEnds, r.time().toEpochMilli());
            int bucket = i >= 0 ? i + 1 : -i - 1;
            if (bucket >= windowEnds.length) {
                after.merge(reason, 1L, Long::sum);
            } else {
                counts.computeIfAbsent(reason, k -> new long[windowEnds.length])[bucket]++;
            }
        }
        ObjectNode o = NODES.objectNode();
        ArrayNode byReason = o.putArray("byReason");
        counts.forEach((reason, n) -> {
            ObjectNode entry = byReason.addObject();
            entry.put("reason", reason);
            ArrayNode values = entry.putArray("n");
            for (long v : n) {
                values.add(v);
            }
        });
        after.forEach(o.putObject("afterLastWindow")::put);
        untimed.forEach(o.putObject("timeUnknown")::put);
        return o;
    }
}
