package org.oddswatch.ingest.service;

import java.io.IOException;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Collection;
import java.util.List;
import java.util.Properties;
import java.util.TreeSet;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.ingest.kafka.BoundedTopicReader;
import org.oddswatch.ingest.pipeline.CusumHistory;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Reads back the alerts already published, so the alert lifecycle survives a restart or a move to
 * another instance: every alerts topic from the beginning up to its end offsets at the time of the
 * read (bounded). Records that are not alert JSON are
 * skipped with a warning. Likewise the CUSUM values published with final estimates
 * ({@link #readCharts}), so the charts of streams with a baseline file continue where they stood.
 */
final class AlertArchive {

    private static final Logger LOG = LoggerFactory.getLogger(AlertArchive.class);

    private final Properties readerProps;
    private final Duration timeout;

    AlertArchive(Properties readerProps, Duration timeout) {
        this.readerProps = readerProps;
        this.timeout = timeout;
    }

    /** Alerts of all the given topics, partition by partition in offset order. */
    List<Alert> read(Collection<String> alertTopics) {
        List<Alert> alerts = new ArrayList<>();
        try (BoundedTopicReader reader = new BoundedTopicReader(readerProps, timeout)) {
            for (String topic : new TreeSet<>(alertTopics)) {
                reader.readAll(topic, record -> {
                    try {
                        alerts.add(Json.mapper().readValue(record.value(), Alert.class));
                    } catch (IOException | RuntimeException e) {
                        LOG.warn("skipping unreadable alert at {}-{}@{}: {}", record.topic(), record.partition(),
                                record.offset(), e.getMessage());
                    }
                });
            }
        }
        return alerts;
    }

    /**
     * The CUSUM values of the final estimates in the given estimates topics (keyed
     * {@code <stream>|<windowEnd>}; compacted, so one record per window), from the beginning up to the
     * end offsets at the time of the read. Interim estimates and estimates without CUSUM values are
     * passed over; records that are not estimate JSON are skipped with a warning.
     */
    CusumHistory readCharts(Collection<String> estimatesTopics) {
        CusumHistory history = new CusumHistory();
        try (BoundedTopicReader reader = new BoundedTopicReader(readerProps, timeout)) {
            for (String topic : new TreeSet<>(estimatesTopics)) {
                reader.readAll(topic, record -> {
                    if (record.value() != null && !history.add(record.value())) {
                        LOG.warn("skipping unreadable estimate at {}-{}@{}", record.topic(), record.partition(),
                                record.offset());
                    }
                });
            }
        }
        return history;
    }
}
