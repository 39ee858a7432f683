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
 * Makes the pipeline of each assigned input partition: the monitors reading its topic, with a replay
 * hint naming the topic (so a live alert names the replay that reproduces it). While the pipeline
 * lives, the gauge {@code oddswatch.pipeline.streams} (tags {@code topic}, {@code partition}) shows
 * how many streams it holds.
 *
 * @param listener where every pipeline's output goes; also takes the loop's pipeline-error rejects
 */
record PartitionPipelines(MonitorConfig config, PipelineSettings settings, PipelineListener listener,
                          MeterRegistry registry) {

    /** A fresh pipeline for {@code partition}, its stream gauge registered until it is released. */
    MonitorPipeline open(TopicPartition partition) {
        MonitorPipeline pipeline = new MonitorPipeline(partition.toString(), config.monitorsFor(partition.topic()),
                listener, settings.withReplayHint(new ReplayHint(config.file(), null, partition.topic())));
        Gauge streams = Gauge.builder("oddswatch.pipeline.streams", pipeline, MonitorPipeline::streamCount)
                .description("streams held by one partition's pipeline")
                .tag("topic", partition.topic())
                .tag("partition", Integer.toString(partition.partition()))
                .register(registry);
        pipeline.onRelease(() -> registry.remove(streams));
        return pipeline;
    }
}
