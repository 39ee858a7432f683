package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.Collection;
import java.util.HashMap;
import java.util.Map;
import org.apache.kafka.clients.consumer.CommitFailedException;
import org.apache.kafka.clients.consumer.KafkaConsumer;
import org.apache.kafka.clients.consumer.OffsetAndMetadata;
import org.apache.kafka.common.TopicPartition;
import org.apache.kafka.common.errors.RebalanceInProgressException;
import org.apache.kafka.common.errors.RetriableException;
import org.oddswatch.ingest.kafka.KafkaOutputPublisher;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The commit step of the poll loop: waits (at most {@code brokerWait}) until every output sent so
 * far is stored, then commits synchronously, per partition, the offset after the last live record
 * handled ({@link OwnedPartition#nextCommit}, which never passes a record still held). Offsets are
 * thus committed only after every output caused by the records before them is acknowledged: at
 * least once, and a clean stop or hand-over repeats nothing.
 *
 * <p>A commit that meets a rebalance in progress ({@link RebalanceInProgressException},
 * {@link CommitFailedException}) keeps its offsets pending: the next poll completes the rebalance,
 * partitions that leave are committed in the revoke callback, the others on the next try. Nothing
 * is committed while outputs are lost to the producer ({@link KafkaOutputPublisher#storeFailure()}):
 * the loop rebuilds from the last commit instead.
 */
final class OffsetCommitter {

    private static final Logger LOG = LoggerFactory.getLogger(OffsetCommitter.class);

    /**
     * How a commit ended.
     *
     * @param committed true when the offsets are committed (or there was nothing to commit)
     * @param brokerTrouble why the broker is failing (outputs not stored in time, the commit timed
     *     out), or null: a commit neither committed nor failing was deferred (rebalance, lost outputs)
     */
    record Result(boolean committed, String brokerTrouble) {
        static final Result DONE = new Result(true, null);
        static final Result DEFERRED = new Result(false, null);
    }

    private final KafkaConsumer<byte[], byte[]> consumer;
    private final KafkaOutputPublisher publisher;
    private final Duration brokerWait;
    private boolean deferralLogged;

    OffsetCommitter(KafkaConsumer<byte[], byte[]> consumer, KafkaOutputPublisher publisher, Duration brokerWait) {
        this.consumer = consumer;
        this.publisher = publisher;
        this.brokerWait = brokerWait;
    }

    /** Flushes the outputs and commits the given partitions of {@code owned} (see the class comment). */
    Result commit(Map<TopicPartition, OwnedPartition> owned, Collection<TopicPartition> partitions) {
        if (!publisher.awaitStored(brokerWait)) {
            return new Result(false, publisher.pending() + " outputs not stored by the broker within " + brokerWait);
        }
        if (publisher.storeFailure() != null) {
            return Result.DEFERRED;
        }
        Map<TopicPartition, OffsetAndMetadata> offsets = new HashMap<>();
        for (TopicPartition tp : partitions) {
            OwnedPartition p = owned.get(tp);
            if (p != null && p.nextCommit > p.lastCommitted) {
                offsets.put(tp, new OffsetAndMetadata(p.nextCommit));
            }
        }
        if (offsets.isEmpty()) {
            return Result.DONE;
        }
        try {
            consumer.commitSync(offsets, brokerWait);
        } catch (RebalanceInProgressException | CommitFailedException e) {
            if (!deferralLogged) {
                LOG.info("commit deferred until the group's rebalance completes: {}", e.getClass().getSimpleName());
                deferralLogged = true;
            }
            return Result.DEFERRED;
        } catch (RetriableException e) {
            return new Result(false, "commit failed: " + e);
        }
        deferralLogged = false;
        offsets.forEach((tp, om) -> owned.get(tp).lastCommitted = om.offset());
        return Result.DONE;
    }

    /** Whether outputs were lost to the producer (they are produced again by a rebuild), and why. */
    Exception outputsLost() {
        return publisher.storeFailure();
    }

    /**
     * Waits for every send outstanding to end, then forgets the loss, so the rebuild can start.
     *
     * @return false when sends are still outstanding (try again later)
     */
    boolean settleLostOutputs() {
        if (!publisher.awaitStored(brokerWait)) {
            return false;
        }
        publisher.clearStoreFailure();
        return true;
    }
}
