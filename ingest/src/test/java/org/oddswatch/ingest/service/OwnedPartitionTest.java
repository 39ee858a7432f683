package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.apache.kafka.common.TopicPartition;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;
import org.oddswatch.ingest.service.OwnedPartition.Phase;

/**
 * The life cycle of an owned partition and its commit rule, without a broker: ASSIGNED until planned,
 * REBUILDING while the position is below the rebuild end, LIVE from it on; the offset to commit is
 * the one after the last live record, but never past a record a stream still holds.
 */
class OwnedPartitionTest {

    private static OwnedPartition partition() {
        return new OwnedPartition(new TopicPartition("in", 0),
                new MonitorPipeline("in-0", List.of(), new PipelineListener() { }, PipelineSettings.defaults()));
    }

    @Test
    void goesLiveExactlyWhenThePositionReachesTheRebuildEnd() {
        OwnedPartition p = partition();
        assertTrue(p.is(Phase.ASSIGNED));
        assertEquals(-1, p.reachedRebuildEnd(1_000, 5), "not planned: stays assigned");
        p.rebuildPlanned(100, 1_000L);
        assertTrue(p.is(Phase.REBUILDING));
        assertTrue(p.suppresses(99));
        assertFalse(p.suppresses(100), "the committed offset itself is live");
        assertEquals(-1, p.reachedRebuildEnd(99, 2_000L), "one record short of the end");
        assertTrue(p.is(Phase.REBUILDING));
        assertEquals(1_500L, p.reachedRebuildEnd(100, 2_500L), "rebuild time from the plan");
        assertTrue(p.is(Phase.LIVE));
        assertEquals(-1, p.reachedRebuildEnd(200, 3_000L), "live once");
        assertThrows(IllegalStateException.class, () -> p.rebuildPlanned(300, 4_000L));
    }

    @Test
    void nothingToRebuildGoesLiveAtOnce() {
        OwnedPartition p = partition();
        p.rebuildPlanned(0, 10L);
        assertEquals(0L, p.reachedRebuildEnd(0, 10L));
        assertTrue(p.is(Phase.LIVE));
    }

    @Test
    void theCommitStopsAtTheOldestHeldRecord() {
        OwnedPartition p = partition();
        p.handled(50, Long.MAX_VALUE);
        assertEquals(50, p.nextCommit, "nothing held: after the last live record");
        p.handled(80, 60);
        assertEquals(60, p.nextCommit, "held from 60: no commit past it");
        p.handled(-1, 70);
        assertEquals(70, p.nextCommit, "no live record, the held one moved on");
        p.lastCommitted = 70;
        p.handled(90, 70);
        assertEquals(70, p.nextCommit, "held at the committed offset: the pending commit stays");
        p.handled(95, 71);
        assertEquals(71, p.nextCommit, "held one past the committed offset");
        p.handled(100, Long.MAX_VALUE);
        assertEquals(100, p.nextCommit, "released: after the last live record");
    }
}
