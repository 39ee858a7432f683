package org.oddswatch.ingest.pipeline;

import java.util.EnumMap;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.TreeMap;

/** Mutable counts of record outcomes and of reasons (rejected, late, duplicate). Not thread-safe. */
public final class OutcomeCounts {

    private final EnumMap<Outcome, Long> outcomes = new EnumMap<>(Outcome.class);
    private final TreeMap<String, Long> reasons = new TreeMap<>();

    public void add(RecordOutcome outcome) {
        outcomes.merge(outcome.outcome(), 1L, Long::sum);
        if (outcome.reason() != null) {
            reasons.merge(outcome.reason(), 1L, Long::sum);
        }
    }

    public long get(Outcome outcome) {
        return outcomes.getOrDefault(outcome, 0L);
    }

    /** All counted records: accepted + rejected + late + duplicate. */
    public long total() {
        long sum = 0;
        for (long count : outcomes.values()) {
            sum += count;
        }
        return sum;
    }

    public long reason(String reason) {
        return reasons.getOrDefault(reason, 0L);
    }

    /** An immutable copy with every outcome present (zeros included) and reasons sorted. */
    public Snapshot snapshot() {
        Map<String, Long> byOutcome = new LinkedHashMap<>();
        for (Outcome outcome : Outcome.values()) {
            byOutcome.put(outcome.toString(), get(outcome));
        }
        return new Snapshot(total(), byOutcome, new TreeMap<>(reasons));
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
