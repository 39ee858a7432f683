package org.oddswatch.ingest.kafka;

import java.util.Map;
import java.util.Properties;
import org.apache.kafka.clients.consumer.ConsumerConfig;
import org.apache.kafka.clients.producer.ProducerConfig;

/**
 * Client properties for the service. The user's {@code kafka:} settings (bootstrap servers, security
 * protocol, SASL and TLS keys, tuning) pass through unchanged; on top of them the service sets only
 * what its delivery guarantees depend on:
 * <ul>
 *   <li>consumers: {@code enable.auto.commit=false} (offsets are committed after outputs are flushed),
 *       {@code group.id} from the service settings, {@code auto.offset.reset=earliest} unless given,
 *       {@code isolation.level=read_committed} unless given;</li>
 *   <li>producers: {@code enable.idempotence=true}, {@code acks=all} (no duplicates from retries,
 *       no loss on leader change), {@code delivery.timeout.ms} unlimited unless given (an output
 *       waits out a broker outage in the producer, in order, instead of expiring: the service stops
 *       reading input meanwhile, so what waits is bounded).</li>
 * </ul>
 */
public final class KafkaClientSettings {

    private final Map<String, String> userProps;

    /** @param userProps the definition's {@code kafka:} mapping after environment overrides */
    public KafkaClientSettings(Map<String, String> userProps) {
        this.userProps = Map.copyOf(userProps);
    }

    /** The user's settings alone (for admin clients and plain readers). */
    public Properties base() {
        Properties props = new Properties();
        props.putAll(userProps);
        return props;
    }

    /** Settings of the service's group consumer. */
    public Properties consumer(String groupId, String clientId) {
        Properties props = base();
        props.put(ConsumerConfig.GROUP_ID_CONFIG, groupId);
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.putIfAbsent(ConsumerConfig.AUTO_OFFSET_RESET_CONFIG, "earliest");
        props.putIfAbsent(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        props.putIfAbsent(ConsumerConfig.CLIENT_ID_CONFIG, clientId);
        return props;
    }

    /** Settings of a consumer outside any group (assign and seek only; nothing committed). */
    public Properties reader(String clientId) {
        Properties props = base();
        props.remove(ConsumerConfig.GROUP_ID_CONFIG);
        props.remove(ConsumerConfig.GROUP_INSTANCE_ID_CONFIG);
        props.put(ConsumerConfig.ENABLE_AUTO_COMMIT_CONFIG, "false");
        props.putIfAbsent(ConsumerConfig.ISOLATION_LEVEL_CONFIG, "read_committed");
        props.putIfAbsent(ConsumerConfig.CLIENT_ID_CONFIG, clientId);
        return props;
    }

    /** Settings of the idempotent output producer. */
    public Properties producer(String clientId) {
        Properties props = base();
        props.put(ProducerConfig.ENABLE_IDEMPOTENCE_CONFIG, "true");
        props.put(ProducerConfig.ACKS_CONFIG, "all");
        props.putIfAbsent(ProducerConfig.LINGER_MS_CONFIG, "10");
        props.putIfAbsent(ProducerConfig.DELIVERY_TIMEOUT_MS_CONFIG, Integer.toString(Integer.MAX_VALUE));
        props.putIfAbsent(ProducerConfig.COMPRESSION_TYPE_CONFIG, "none");
        props.putIfAbsent(ProducerConfig.CLIENT_ID_CONFIG, clientId);
        return props;
    }
}
