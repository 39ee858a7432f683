package org.oddswatch.ingest.service;

import org.apache.kafka.clients.consumer.ConsumerRecord;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.alerts.live.RecentFinals;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.Outcome;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.RecordOrigin;
import org.oddswatch.ingest.pipeline.RecordOutcome;
import org.oddswatch.ingest.pipeline.RejectedRecord;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * One input partition this instance owns, on the poll-loop thread: its pipeline, its life cycle and
 * the offsets to commit. Every transition is made here:
 * {@code ASSIGNED} (paused, rebuild look-ups pending) --{@link #rebuildPlanned}--&gt; {@code REBUILDING}
 * (sought back; records below the rebuild end re-read with output suppressed)
 * --{@link #reachedRebuildEnd}--&gt; {@code LIVE}. A partition that leaves is dropped with its pipeline.
 */
final class OwnedPartition {

    private static final Logger LOG = LoggerFactory.getLogger(OwnedPartition.class);
    /** Reason code of records the pipeline failed on. */
    private static final String PIPELINE_ERROR = "pipeline-error";
    /** The value of a record without one (a tombstone): read as empty, so it is rejected as such. */
    private static final byte[] NO_BYTES = new byte[0];

    enum Phase { ASSIGNED, REBUILDING, LIVE }

    final TopicPartition partition;
    final MonitorPipeline pipeline;
    private Phase phase = Phase.ASSIGNED;
    /** Records below this offset were processed before: state only. */
    private long rebuildUntil = -1;
    private long rebuildStartedNanos;
    /** Offset after the last live record processed that may be committed, or -1 when none since assignment. */
    long nextCommit = -1;
    /** The last offset this instance committed, or -1. */
    long lastCommitted = -1;
    /** The final estimates read back for the live page while rebuilding; handed on and let go when live. */
    RecentFinals finals;

    OwnedPartition(TopicPartition partition, MonitorPipeline pipeline) {
        this.partition = partition;
        this.pipeline = pipeline;
    }

    boolean is(Phase p) {
        return phase == p;
    }

    /** ASSIGNED to REBUILDING: the partition is sought back and re-read up to {@code until} (exclusive). */
    void rebuildPlanned(long until, long nowNanos) {
        if (phase != Phase.ASSIGNED) {
            throw new IllegalStateException(partition + " planned twice");
        }
        phase = Phase.REBUILDING;
        rebuildUntil = until;
        rebuildStartedNanos = nowNanos;
    }

    /**
     * Hands one record to the pipeline. One the pipeline fails on (a defect: bad input has its own
     * reason codes) is logged and (unless suppressed) rejected as {@code pipeline-error}.
     */
    RecordOutcome offer(ConsumerRecord<byte[], byte[]> record, boolean suppress, PipelineListener rejects) {
        byte[] value = record.value() == null ? NO_BYTES : record.value();
        RecordOrigin origin = RecordOrigin.kafka(record.topic(), record.partition(), record.offset());
        try {
            return pipeline.offer(value, origin, suppress);
        } catch (RuntimeException e) {
            LOG.error("the pipeline failed on {}@{}; the record goes to rejects as {}", partition, record.offset(),
                    PIPELINE_ERROR, e);
            if (!suppress) {
                rejects.onReject(new RejectedRecord(null, null, Outcome.REJECTED, PIPELINE_ERROR, String.valueOf(e),
                        origin, value));
            }
            return RecordOutcome.rejected(PIPELINE_ERROR, String.valueOf(e));
        }
    }

    /** Whether the record at {@code offset} is re-read with output suppressed. */
    boolean suppresses(long offset) {
        return offset < rebuildUntil;
    }

    /**
     * REBUILDING to LIVE once the consumer {@code position} has reached the rebuild end.
     *
     * @return the nanoseconds the rebuild took when this call made the partition live, else -1
     */
    long reachedRebuildEnd(long position, long nowNanos) {
        if (phase != Phase.REBUILDING || position < rebuildUntil) {
            return -1;
        }
        phase = Phase.LIVE;
        return nowNanos - rebuildStartedNanos;
    }

    /**
     * Notes one poll's live records: {@code lastLive} the offset after the last one (-1: none),
     * {@code oldestHeld} the smallest offset a stream still holds ({@link Long#MAX_VALUE}: none),
     * which no commit passes (the record is in no window yet).
     */
    void handled(long lastLive, long oldestHeld) {
        long next = lastLive;
        if (oldestHeld != Long.MAX_VALUE && oldestHeld > lastCommitted) {
            next = next < 0 ? oldestHeld : Math.min(next, oldestHeld);
        } else if (oldestHeld != Long.MAX_VALUE) {
            next = -1;
        }
        if (next >= 0) {
            nextCommit = next;
        }
    }
}
