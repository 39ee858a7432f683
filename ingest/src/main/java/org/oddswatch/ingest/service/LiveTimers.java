package org.oddswatch.ingest.service;

import java.time.Duration;
import java.util.Collection;
import java.util.HashMap;
import java.util.Map;
import org.oddswatch.ingest.pipeline.MonitorPipeline;
import org.oddswatch.ingest.pipeline.StreamStatus;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The poll loop's two wall-clock timers, for {@code LIVE} partitions only (a rebuild re-reads the
 * past); a zero or absent duration turns a timer off. Every {@code refresh}, an interim estimate of
 * every stream's open window (not while input is paused for the broker: it could not be stored).
 * A stream whose watermark has not moved for {@code idleTimeout} of wall-clock time (checked once a
 * second) gets its watermark moved to the wall clock, closing its windows up to there. The rules
 * never read the wall clock.
 */
final class LiveTimers {

    private static final Logger LOG = LoggerFactory.getLogger(LiveTimers.class);
    private static final long IDLE_CHECK_NANOS = 1_000_000_000L;

    private final Duration refresh;
    private final Duration idle;
    /** Per stream: the watermark last seen and when (nanoTime) it was first seen at that value. */
    private final Map<String, long[]> activity = new HashMap<>();
    private long lastRefreshNanos = System.nanoTime();
    private long lastIdleCheckNanos;

    LiveTimers(Duration refresh, Duration idle) {
        this.refresh = refresh;
        this.idle = idle;
    }

    /** Runs the timers that are due over the live partitions of {@code owned}. */
    void tick(Collection<OwnedPartition> owned, long nowNanos, boolean inputPaused) {
        if (on(refresh) && nowNanos - lastRefreshNanos >= refresh.toNanos() && !inputPaused) {
            for (OwnedPartition p : owned) {
                if (p.is(OwnedPartition.Phase.LIVE)) {
                    p.pipeline.emitInterim();
                }
            }
            lastRefreshNanos = nowNanos;
        }
        if (on(idle) && nowNanos - lastIdleCheckNanos >= IDLE_CHECK_NANOS) {
            lastIdleCheckNanos = nowNanos;
            for (OwnedPartition p : owned) {
                if (p.is(OwnedPartition.Phase.LIVE)) {
                    moveQuietStreams(p.pipeline, nowNanos);
                }
            }
        }
    }

    /** Forgets the streams of a pipeline that leaves. */
    void forget(MonitorPipeline pipeline) {
        pipeline.streams().forEach(activity::remove);
    }

    private void moveQuietStreams(MonitorPipeline pipeline, long nowNanos) {
        for (StreamStatus stream : pipeline.snapshot().streams()) {
            if (stream.watermark() == null) {
                continue;
            }
            long watermark = stream.watermark().toEpochMilli();
            long[] seen = activity.computeIfAbsent(stream.stream(), s -> new long[] {watermark, nowNanos});
            if (seen[0] != watermark) {
                seen[0] = watermark;
                seen[1] = nowNanos;
            } else if (nowNanos - seen[1] >= idle.toNanos()) {
                long wall = System.currentTimeMillis();
                if (wall > watermark) {
                    LOG.info("stream {} idle for {}: watermark moved to the wall clock", stream.stream(), idle);
                    pipeline.advanceWatermark(stream.stream(), wall);
                    seen[0] = wall;
                }
                seen[1] = nowNanos;
            }
        }
    }

    private static boolean on(Duration d) {
        return d != null && !d.isZero();
    }
}
