package org.oddswatch.ingest.pipeline;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.ingest.decode.RejectReason;

class OutcomeCountsTest {

    @Test
    void countsOutcomesAndReasonsAndWritesEveryOutcomeInDeclarationOrder() {
        OutcomeCounts counts = new OutcomeCounts();
        counts.add(RecordOutcome.ACCEPTED);
        counts.add(RecordOutcome.ACCEPTED);
        counts.add(RecordOutcome.duplicate("id 'x' already seen"));
        counts.add(RecordOutcome.rejected(RejectReason.MISSING_FIELD, "no event id at /id"));
        counts.add(RecordOutcome.duplicate("id 'y' already seen"));
        counts.add(RecordOutcome.rejected(RejectReason.BAD_TIME, "not a time"));
        OutcomeCounts.Snapshot snapshot = counts.snapshot();
        assertEquals(2, snapshot.outcome(Outcome.ACCEPTED));
        assertEquals(0, snapshot.outcome(Outcome.LATE));
        assertEquals(6, snapshot.consumed());
        assertEquals(2, snapshot.reasons().get(RejectReason.DUPLICATE));
        assertEquals(null, snapshot.reasons().get(RejectReason.LATE));
        // Hand-written expectation: outcomes in enum order with zeros, reasons sorted by code.
        assertEquals("{\"consumed\":6,\"outcomes\":{\"accepted\":2,\"rejected\":2,\"late\":0,\"duplicate\":2},"
                        + "\"reasons\":{\"" + RejectReason.BAD_TIME + "\":1,\"duplicate\":2,\""
                        + RejectReason.MISSING_FIELD + "\":1}}",
                Json.write(counts.snapshot()));
    }

    @Test
    void anEmptySnapshotStillListsEveryOutcome() {
        assertEquals("{\"consumed\":0,\"outcomes\":{\"accepted\":0,\"rejected\":0,\"late\":0,\"duplicate\":0},"
                + "\"reasons\":{}}", Json.write(new OutcomeCounts().snapshot()));
    }
}
