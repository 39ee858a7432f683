package org.oddswatch.ingest.pipeline;

import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.TreeMap;

/**
 * Mutable counts of record outcomes and of reasons (rejected, late, duplicate). Not thread-safe.
 *
 * <p>Outcomes are counted in an array by ordinal; the reason map is touched only for records that
 * have a reason (accepted ones have none), with one mutable counter per reason, so counting an
 * accepted record is one array increment.
 */
public final class OutcomeCounts {

    private static final Outcome[] OUTCOMES = Outcome.values();

    private final long[] outcomes = new long[OUTCOMES.length];
    private final HashMap<String, long[]> reasons = new HashMap<>();

    /** Counts one outcome; {@link RecordOutcome#HELD} is not an outcome yet and is skipped. */
    public void add(RecordOutcome outcome) {
        if (outcome.held()) {
            return;
        }
        outcomes[outcome.outcome().ordinal()]++;
        String reason = outcome.reason();
        if (reason != null) {
            long[] count = reasons.get(reason);
            if (count == null) {
                count = new long[1];
                reasons.put(reason, count);
            }
            count[0]++;
        }
    }

    public long get(Outcome outcome) {
        return outcomes[outcome.ordinal()];
    }

    /** All counted records: accepted + rejected + late + duplicate. */
    public long total() {
        long sum = 0;
        for (long count : outcomes) {
            sum += count;
        }
        return sum;
    }

    public long reason(String reason) {
        long[] count = reasons.get(reason);
        return count == null ? 0L : count[0];
    }

    /** An immutable copy with every outcome present (zeros included) and reasons sorted. */
    public Snapshot snapshot() {
        Map<String, Long> byOutcome = new LinkedHashMap<>();
        for (Outcome outcome : OUTCOMES) {
            byOutcome.put(outcome.toString(), get(outcome));
        }
        Map<String, Long> byReason = new TreeMap<>();
        reasons.forEach((reason, count) -> byReason.put(reason, count[0]));
        return new Snapshot(total(), byOutcome, byReason);
    }

    /**
     * Counts as JSON: {@code consumed} = sum of {@code outcomes}.
     *
     * @param outcomes accepted, rejected, late, duplicate
     * @param reasons count per reason code, sorted by code
     */
    public record Snapshot(long consumed, Map<String, Long> outcomes, Map<String, Long> reasons) {

        public Snapshot {
            outcomes = java.util.Collections.unmodifiableMap(new LinkedHashMap<>(outcomes));
            reasons = java.util.Collections.unmodifiableMap(new TreeMap<>(reasons));
        }

        public long outcome(Outcome outcome) {
            return outcomes.getOrDefault(outcome.toString(), 0L);
        }

        /** The sum of this and {@code other}. */
        public Snapshot plus(Snapshot other) {
            Map<String, Long> byOutcome = new LinkedHashMap<>(outcomes);
            other.outcomes.forEach((k, v) -> byOutcome.merge(k, v, Long::sum));
            Map<String, Long> byReason = new TreeMap<>(reasons);
            other.reasons.forEach((k, v) -> byReason.merge(k, v, Long::sum));
            return new Snapshot(consumed + other.consumed, byOutcome, byReason);
        }
    }
}
