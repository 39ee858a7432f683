package org.oddswatch.ingest.service;

import org.apache.kafka.common.TopicPartition;
import org.oddswatch.ingest.pipeline.MonitorPipeline;

/**
 * What the service holds for one assigned input partition: its own pipeline (the streams keyed to
 * this partition), how far the suppressed re-read must go, and the next offset to commit.
 * Used by the poll-loop thread and, while a batch of its records is in flight, by the
 * {@link BatchWorker} (never both at once).
 */
final class PartitionState {

    final TopicPartition partition;
    final MonitorPipeline pipeline;
    /** Records below this offset were processed before (by this or another instance): state only. */
    long rebuildUntil = -1;
    /** False from assignment until the seek-back position is set (the partition is paused meanwhile). */
    boolean planned;
    /** Offset after the last live record processed, or -1 when none since assignment. */
    long nextCommit = -1;
    long lastCommitted = -1;
    /** When the rebuild was planned; 0 once the partition is live. */
    long rebuildStartedNanos;
    long rebuiltRecords;
    /** The consumer position up to which every polled record has been through the pipeline. */
    long processedPosition = -1;

    PartitionState(TopicPartition partition, MonitorPipeline pipeline) {
        this.partition = partition;
        this.pipeline = pipeline;
    }
}
