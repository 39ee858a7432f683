package org.oddswatch.ingest.service;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.binder.MeterBinder;
import org.apache.kafka.common.TopicPartition;
import org.oddswatch.alerts.engine.ReplayHint;
import org.oddswatch.ingest.definition.MonitorConfig;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.PipelineListener;
import org.oddswatch.ingest.pipeline.PipelineSettings;

/**
 * Makes the pipeline of each assigned input partition: the monitors reading its topic, the given
 * pipeline settings, and (unless the caller set one) a replay hint naming the topic, so an alert of
 * the live service names the replay that reproduces it. Each pipeline's stream count is bound to the
 * registry ({@link PartitionStreamsMetrics}) and unbound when the pipeline is released.
 */
final class PartitionPipelines {

    private final MonitorConfig config;
    private final PipelineSettings settings;
    private final PipelineListener listener;
    private final MeterRegistry registry;

    /**
     * @param listener where every pipeline's output goes
     * @param registry where the per-partition stream counts go
     */
    PartitionPipelines(MonitorConfig config, PipelineSettings settings, PipelineListener listener,
                       MeterRegistry registry) {
        this.config = config;
        this.settings = settings;
        this.listener = listener;
        this.registry = registry;
    }

    /** What the pipelines report to (the service's outputs and meters); also takes pipeline-error rejects. */
    PipelineListener listener() {
        return listener;
    }

    /** A fresh pipeline for {@code partition}, its stream count bound until it is released. */
    MonitorPipeline open(TopicPartition partition) {
        MonitorPipeline pipeline = new MonitorPipeline(partition.toString(), config.monitorsFor(partition.topic()),
                listener, withTopicHint(partition.topic()));
        PartitionStreamsMetrics metrics = new PartitionStreamsMetrics(pipeline, partition);
        metrics.bindTo(registry);
        pipeline.onRelease(metrics::close);
        return pipeline;
    }

    private PipelineSettings withTopicHint(String topic) {
        ReplayHint hint = settings.replayHint();
        if (hint != null && (hint.configPath() != null || hint.inputFile() != null || hint.topic() != null)) {
            return settings;
        }
        return settings.withReplayHint(new ReplayHint(config.file(), null, topic));
    }

    /**
     * {@code oddswatch.pipeline.streams} (gauge, tags {@code topic}, {@code partition}): the streams
     * one partition's pipeline holds; {@link #close()} removes it.
     */
    static final class PartitionStreamsMetrics implements MeterBinder, AutoCloseable {

        private final MonitorPipeline pipeline;
        private final TopicPartition partition;
        private MeterRegistry registry;
        private Gauge gauge;

        PartitionStreamsMetrics(MonitorPipeline pipeline, TopicPartition partition) {
            this.pipeline = pipeline;
            this.partition = partition;
        }

        @Override
        public void bindTo(MeterRegistry meterRegistry) {
            registry = meterRegistry;
            gauge = Gauge.builder("oddswatch.pipeline.streams", pipeline, MonitorPipeline::streamCount)
                    .description("streams held by one partition's pipeline")
                    .tag("topic", partition.topic())
                    .tag("partition", Integer.toString(partition.partition()))
                    .register(meterRegistry);
        }

        @Override
        public void close() {
            if (gauge != null) {
                registry.remove(gauge);
                gauge = null;
            }
        }
    }
}
