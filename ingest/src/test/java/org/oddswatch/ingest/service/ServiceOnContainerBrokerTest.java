package org.oddswatch.ingest.service;

import org.junit.jupiter.api.Test;
import org.testcontainers.junit.jupiter.Container;
import org.testcontainers.junit.jupiter.Testcontainers;
import org.testcontainers.kafka.KafkaContainer;

/**
 * The end-to-end check against a broker in a container (the Apache Kafka image, KRaft mode), for
 * machines with Docker. Without a Docker engine the whole class is skipped.
 */
@Testcontainers(disabledWithoutDocker = true)
class ServiceOnContainerBrokerTest {

    @Container
    static final KafkaContainer KAFKA = new KafkaContainer("apache/kafka:4.0.0");

    @Test
    void finalEstimatesOnTheTopicEqualThoseOfAFileReplay() throws Exception {
        ServiceEndToEndTest.runAgainst(KAFKA::getBootstrapServers, "container");
    }
}
