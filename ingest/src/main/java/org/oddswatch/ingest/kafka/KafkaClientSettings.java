package org.oddswatch.ingest.kafka;

import java.util.Map;
import java.util.Properties;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.consumer.CooperativeStickyAssignor;
import org.apache.kafka.clients.producer.ProducerConfig;

/**
 * Client properties for the service: the user's {@code kafka:} settings (bootstrap servers,
 * security, tuning) unchanged, plus what the delivery guarantees depend on. A setting marked
 * "unless given" yields to the user's.
 */
public final class KafkaClientSettings {

    private final Map<String, String> userProps;

    /** @param userProps the definition's {@code kafka:} mapping after environment overrides */
    public KafkaClientSettings(Map<String, String> userProps) {
        this.userProps = Map.copyOf(userProps);
    }

    private Properties base(String clientId) {
        Properties props = new Properties();
        props.putAll(userProps);
        props.putIfAbsent(ConsumerConfig.CLIENT_ID_CONFIG, clientId);
        return props;
    }

    /**
     * The service's group consumer: no auto-commit (offsets are committed after outputs are stored);
     * the cooperative-sticky assignor with the classic group protocol; unless given,
     * {@code auto.offset.reset=earliest}, {@code isolation.level=read_committed}, and fetches large
     * enough that the next arrives while a poll's records are applied: 50,000 records a poll (about
     * 30 MB of heap), 4 MiB per partition, the socket receive buffer left to the system ({@code -1}).
     */
    public Properties consumer(String groupId, String clientId) {
        Properties props = base(clientId);
        props.put(ConsumerConfig.GROUP_ID_CONFIG, groupId);
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.putIfAbsent(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
        props.putIfAbsent(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        if (!"consumer".equalsIgnoreCase(String.valueOf(props.getOrDefault(ConsumerConfig.GROUP_PROTOCOL_CONFIG, "")))) {
            props.putIfAbsent(ConsumerConfig.PARTITION_ASSIGNMENT_STRATEGY_CONFIG, CooperativeStickyAssignor.class.getName());
        }
        props.putIfAbsent(ConsumerConfig.MAX_POLL_RECORDS_CONFIG, "50000");
        props.putIfAbsent(ConsumerConfig.MAX_PARTITION_FETCH_BYTES_CONFIG, Integer.toString(4 << 20));
        props.putIfAbsent(ConsumerConfig.RECEIVE_BUFFER_CONFIG, "-1");
        return props;
    }

    /** A consumer outside any group (assign and seek only; nothing committed). */
    public Properties reader(String clientId) {
        Properties props = base(clientId);
        props.remove(ConsumerConfig.GROUP_ID_CONFIG);
        props.remove(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG);
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.putIfAbsent(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        return props;
    }

    /**
     * The idempotent output producer, {@code acks=all}; unless given, {@code linger.ms=10}, no
     * compression, and an unlimited {@code delivery.timeout.ms}, so an output waits out a broker
     * outage in order instead of expiring (input is paused meanwhile, so what waits is bounded).
     */
    public Properties producer(String clientId) {
        Properties props = base(clientId);
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "true");
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.putIfAbsent(ProducerConfig.LINGER_MS_CONFIG, "10");
        props.putIfAbsent(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, Integer.toString(Integer.MAX_VALUE));
        props.putIfAbsent(ProducerConfig.COMPRESSION_TYPE_CONFIG, "none");
        return props;
    }
}
