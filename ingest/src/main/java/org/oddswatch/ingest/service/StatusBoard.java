package org.oddswatch.ingest.service;

import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.OptionalLong;
import java.util.Set;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.ingest.pipeline.OutcomeCounts;
import org.oddswatch.ingest.pipeline.PipelineSnapshot;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The {@code /status} snapshot, built on the poll-loop thread and read by any through one volatile
 * field. Building it also updates the monitoring-gap meters and warns once per stream found in two
 * partitions (each then estimates it separately).
 */
final class StatusBoard {

    private static final Logger LOG = LoggerFactory.getLogger(StatusBoard.class);

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final ServiceLoopMetrics meters;
    private final Set<String> splitStreamsWarned = new HashSet<>();
    private volatile ServiceStatus current = ServiceStatus.starting();

    StatusBoard(KafkaConsumer<byte[], byte[]> consumer, ServiceLoopMetrics meters) {
        this.consumer = consumer;
        this.meters = meters;
    }

    ServiceStatus current() {
        return current;
    }

    /** Builds and publishes a snapshot; {@code state} and {@code reason} as in {@link ServiceStatus}. */
    void publish(Collection<OwnedPartition> owned, String state, String reason, OutcomeCounts counts) {
        List<ServiceStatus.PartitionStatus> partitions = new ArrayList<>();
        List<PipelineSnapshot> inputs = new ArrayList<>();
        Map<String, TopicPartition> owners = new HashMap<>();
        for (OwnedPartition p : owned) {
            OptionalLong lag = p.is(OwnedPartition.Phase.ASSIGNED) ? OptionalLong.empty() : consumer.currentLag(p.partition);
            partitions.add(new ServiceStatus.PartitionStatus(p.partition.topic(), p.partition.partition(),
                    !p.is(OwnedPartition.Phase.LIVE), p.lastCommitted < 0 ? null : p.lastCommitted, lag.isPresent() ? lag.getAsLong() : null));
            PipelineSnapshot pipeline = p.pipeline.snapshot();
            inputs.add(pipeline);
            for (StreamStatus stream : pipeline.streams()) {
                TopicPartition other = owners.putIfAbsent(stream.stream(), p.partition);
                if (other != null && splitStreamsWarned.add(stream.stream())) {
                    LOG.warn("stream {} receives events from {} and {}: each partition estimates it separately. "
                            + "Key the records by the split value (or use one partition) so a stream lives on one "
                            + "partition.", stream.stream(), other, p.partition);
                }
            }
        }
        meters.monitoringGaps(inputs);
        current = new ServiceStatus(state, reason, counts.snapshot(), partitions, inputs);
    }

    void stopped() {
        current = current.stopped();
    }
}
