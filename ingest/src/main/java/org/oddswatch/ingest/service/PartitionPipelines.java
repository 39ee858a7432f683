package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;

/**
 * Makes the pipeline of each assigned input partition: the monitors reading its topic, and (unless
 * the settings name one) a replay hint naming the topic, so a live alert names the replay that
 * reproduces it. While the pipeline lives, the gauge {@code oddswatch.pipeline.streams} (tags
 * {@code topic}, {@code partition}) shows how many streams it holds.
 */
final class PartitionPipelines {

    private final MonitorConfig config;
    private final PipelineSettings settings;
    private final PipelineListener listener;
    private final MeterRegistry registry;

    /** @param listener where every pipeline's output goes */
    PartitionPipelines(MonitorConfig config, PipelineSettings settings, PipelineListener listener,
                       MeterRegistry registry) {
        this.config = config;
        this.settings = settings;
        this.listener = listener;
        this.registry = registry;
    }

    /** What the pipelines report to; also takes pipeline-error rejects. */
    PipelineListener listener() {
        return listener;
    }

    /** A fresh pipeline for {@code partition}, its stream gauge registered until it is released. */
    MonitorPipeline open(TopicPartition partition) {
        MonitorPipeline pipeline = new MonitorPipeline(partition.toString(), config.monitorsFor(partition.topic()),
                listener, withTopicHint(partition.topic()));
        Gauge streams = Gauge.builder("oddswatch.pipeline.streams", pipeline, MonitorPipeline::streamCount)
                .description("streams held by one partition's pipeline")
                .tag("topic", partition.topic())
                .tag("partition", Integer.toString(partition.partition()))
                .register(registry);
        pipeline.onRelease(() -> registry.remove(streams));
        return pipeline;
    }

    private PipelineSettings withTopicHint(String topic) {
        ReplayHint hint = settings.replayHint();
        if (hint != null && (hint.configPath() != null || hint.inputFile() != null || hint.topic() != null)) {
            return settings;
        }
        return settings.withReplayHint(new ReplayHint(config.file(), null, topic));
    }
}
