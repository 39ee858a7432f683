package org.oddswatch.ingest.service;

import java.util.List;
import org.oddswatch.ingest.pipeline.OutcomeCounts;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;

/**
 * What {@code /status} shows: a snapshot by the poll loop, at most a fraction of a second old.
 *
 * @param state {@code starting}, {@code rebuilding}, {@code ready}, {@code waiting-for-broker} (the
 *     broker does not answer: input paused, retried with backoff) or {@code stopped}
 * @param reason why the service is waiting for the broker, or null
 * @param counts live records consumed since start by outcome and reason (the suppressed re-read
 *     is not counted): {@code consumed = accepted + rejected + late + duplicate}
 * @param partitions the assigned input partitions
 * @param inputs per assigned partition, its pipeline: every stream with watermark, last final window
 *     and counts
 */
public record ServiceStatus(String state, String reason, OutcomeCounts.Snapshot counts,
                            List<PartitionStatus> partitions, List<PipelineSnapshot> inputs) {

    public ServiceStatus {
        partitions = List.copyOf(partitions);
        inputs = List.copyOf(inputs);
    }

    static ServiceStatus starting() {
        return new ServiceStatus("starting", null, new OutcomeCounts().snapshot(), List.of(), List.of());
    }

    ServiceStatus stopped() {
        return new ServiceStatus("stopped", null, counts, partitions, inputs);
    }

    /**
     * @param rebuilding true while the partition is being re-read to rebuild state
     * @param committed the last offset this instance committed, or null
     * @param lag records between the consumer position and the partition end, when the client knows it
     */
    public record PartitionStatus(String topic, int partition, boolean rebuilding, Long committed, Long lag) {
    }
}
