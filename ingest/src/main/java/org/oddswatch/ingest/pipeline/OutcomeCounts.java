package org.oddswatch.ingest.pipeline;

import java.util.Collections;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.TreeMap;

/** Mutable counts of record outcomes and of their reasons (rejected, late, duplicate). Not thread-safe. */
public final class OutcomeCounts {

    private final long[] outcomes = new long[Outcome.values().length];
    private final Map<String, long[]> reasons = new HashMap<>();

    /** Counts one outcome; {@link RecordOutcome#HELD} is not an outcome yet and is skipped. */
    public void add(RecordOutcome outcome) {
        if (outcome.held()) {
            return;
        }
        outcomes[outcome.outcome().ordinal()]++;
        if (outcome.reason() != null) {
            reasons.computeIfAbsent(outcome.reason(), r -> new long[1])[0]++;
        }
    }

    /** An immutable copy with every outcome present (zeros included) and reasons sorted. */
    public Snapshot snapshot() {
        Map<String, Long> byOutcome = new LinkedHashMap<>();
        long consumed = 0;
        for (Outcome outcome : Outcome.values()) {
            byOutcome.put(outcome.toString(), outcomes[outcome.ordinal()]);
            consumed += outcomes[outcome.ordinal()];
        }
        Map<String, Long> byReason = new TreeMap<>();
        reasons.forEach((reason, count) -> byReason.put(reason, count[0]));
        return new Snapshot(consumed, byOutcome, byReason);
    }

    /**
     * Counts as JSON: {@code consumed} = sum of {@code outcomes}.
     *
     * @param outcomes accepted, rejected, late, duplicate
     * @param reasons count per reason code, sorted by code
     */
    public record Snapshot(long consumed, Map<String, Long> outcomes, Map<String, Long> reasons) {

        public Snapshot {
            outcomes = Collections.unmodifiableMap(new LinkedHashMap<>(outcomes));
            reasons = Collections.unmodifiableMap(new TreeMap<>(reasons));
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
