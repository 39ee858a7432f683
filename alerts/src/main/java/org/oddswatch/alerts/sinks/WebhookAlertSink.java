package org.oddswatch.alerts.sinks;

import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.net.http.HttpTimeoutException;
import java.time.Duration;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.privacy.PublishedAlert;
import org.oddswatch.alerts.privacy.SmallCellPolicy;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * HTTP POST of the alert JSON ({@code Content-Type: application/json}) to one URL. Delivery runs on
 * one daemon thread fed by a bounded queue, so {@link #publish} only enqueues and returns at once.
 * Each attempt has a request timeout; a 2xx response is success; any other status, an I/O error or
 * a timeout is retried up to {@code attempts} attempts in all, waiting {@code backoff}, then twice
 * that, and so on. When every attempt failed, or the queue is full, the alert is dropped from this
 * sink (it is still in the alerts topic and the log), counted and logged. The {@code Idempotency-Key}
 * header carries {@code <alert id>:<state>:<windowEnd>} so a receiver can discard a duplicate of a
 * retried delivery.
 */
public final class WebhookAlertSink implements AlertSink {

    private static final Logger LOG = LoggerFactory.getLogger(WebhookAlertSink.class);

    private final URI url;
    private final Duration timeout;
    private final int attempts;
    private final Duration backoff;
    private final HttpClient client;
    private final ThreadPoolExecutor executor;
    private final OddswatchMeters meters;
    private final SmallCellPolicy cells;
    private final AtomicLong delivered = new AtomicLong();
    private final AtomicLong failedAttempts = new AtomicLong();
    private final AtomicLong retries = new AtomicLong();
    private final AtomicLong failures = new AtomicLong();
    private final AtomicLong dropped = new AtomicLong();

    /**
     * @param url where to POST
     * @param timeout per-attempt request (and connect) timeout
     * @param attempts attempts in all, at least 1
     * @param backoff wait before the first retry; doubled for each further retry
     * @param queueCapacity alerts waiting for delivery before new ones are dropped
     * @param meters where attempts and failures are counted, or null
     */
    public WebhookAlertSink(URI url, Duration timeout, int attempts, Duration backoff, int queueCapacity,
                            OddswatchMeters meters) {
        this(url, timeout, attempts, backoff, queueCapacity, meters, SmallCellPolicy.DEFAULT);
    }

    /** As above, posting the alert JSON under the monitor's small-cell rule ({@link PublishedAlert}). */
    public WebhookAlertSink(URI url, Duration timeout, int attempts, Duration backoff, int queueCapacity,
                            OddswatchMeters meters, SmallCellPolicy cells) {
        this.cells = cells;
        if (attempts < 1 || queueCapacity < 1) {
            throw new IllegalArgumentException("attempts and queue capacity must be at least 1");
        }
        this.url = url;
        this.timeout = timeout;
        this.attempts = attempts;
        this.backoff = backoff;
        this.meters = meters;
        this.client = HttpClient.newBuilder().connectTimeout(timeout).build();
        this.executor = new ThreadPoolExecutor(1, 1, 0, TimeUnit.MILLISECONDS, new ArrayBlockingQueue<>(queueCapacity),
                runnable -> {
                    Thread t = new Thread(runnable, "oddswatch-webhook");
                    t.setDaemon(true);
                    return t;
                });
    }

    /** Defaults: 4 attempts, 500 ms first backoff, 1000 queued alerts. */
    public WebhookAlertSink(URI url, Duration timeout, OddswatchMeters meters) {
        this(url, timeout, 4, Duration.ofMillis(500), 1000, meters);
    }

    @Override
    public void publish(Alert alert) {
        String body = PublishedAlert.json(alert, cells);
        try {
            executor.execute(() -> deliver(alert, body));
        } catch (RejectedExecutionException e) {
            dropped.incrementAndGet();
            failures.incrementAndGet();
            count(null, "queue-full");
            LOG.error("webhook {}: queue full, alert {} ({}) dropped from this sink", url, alert.id(), alert.state());
        }
    }

    private void deliver(Alert alert, String body) {
        HttpRequest request = HttpRequest.newBuilder(url).timeout(timeout)
                .header("Content-Type", "application/json")
                .header("Idempotency-Key", alert.id() + ":" + alert.state() + ":" + alert.windowEnd())
                .POST(HttpRequest.BodyPublishers.ofString(body)).build();
        long wait = backoff.toMillis();
        for (int attempt = 1; attempt <= attempts; attempt++) {
            String outcome;
            try {
                HttpResponse<Void> response = client.send(request, HttpResponse.BodyHandlers.discarding());
                if (response.statusCode() / 100 == 2) {
                    delivered.incrementAndGet();
                    count("success", null);
                    return;
                }
                outcome = "status";
                LOG.warn("webhook {}: alert {} attempt {}/{} got HTTP {}", url, alert.id(), attempt, attempts,
                        response.statusCode());
            } catch (HttpTimeoutException e) {
                outcome = "timeout";
                LOG.warn("webhook {}: alert {} attempt {}/{} timed out after {}", url, alert.id(), attempt, attempts,
                        timeout);
            } catch (IOException e) {
                outcome = "error";
                LOG.warn("webhook {}: alert {} attempt {}/{} failed: {}", url, alert.id(), attempt, attempts,
                        e.toString());
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                failures.incrementAndGet();
                count(null, "interrupted");
                LOG.error("webhook {}: interrupted, alert {} not delivered", url, alert.id());
                return;
            }
            failedAttempts.incrementAndGet();
            count(outcome, null);
            if (attempt < attempts) {
                retries.incrementAndGet();
                try {
                    Thread.sleep(wait);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    failures.incrementAndGet();
                    count(null, "interrupted");
                    return;
                }
                wait = Math.min(wait * 2, 60_000);
            }
        }
        failures.incrementAndGet();
        count(null, "attempts-exhausted");
        LOG.error("webhook {}: alert {} ({}) not delivered after {} attempts", url, alert.id(), alert.state(), attempts);
    }

    private void count(String attemptOutcome, String failureReason) {
        if (meters == null) {
            return;
        }
        if (attemptOutcome != null) {
            meters.webhookAttempt(attemptOutcome);
        }
        if (failureReason != null) {
            meters.webhookFailure(failureReason);
        }
    }

    /** Alerts delivered with a 2xx response. */
    public long delivered() {
        return delivered.get();
    }

    /** Attempts that failed (status, error or timeout). */
    public long failedAttempts() {
        return failedAttempts.get();
    }

    /** Retries made (attempts after the first). */
    public long retries() {
        return retries.get();
    }

    /** Alerts given up on: attempts exhausted, dropped on a full queue, or interrupted. */
    public long failures() {
        return failures.get();
    }

    /** Alerts dropped because the queue was full. */
    public long dropped() {
        return dropped.get();
    }

    /** Waits until every accepted alert was delivered or given up on; false on timeout. */
    public boolean awaitIdle(Duration max) throws InterruptedException {
        long deadline = System.nanoTime() + max.toNanos();
        while (executor.getQueue().size() > 0 || executor.getActiveCount() > 0
                || executor.getCompletedTaskCount() < executor.getTaskCount()) {
            if (System.nanoTime() > deadline) {
                return false;
            }
            Thread.sleep(10);
        }
        return true;
    }

    /** Stops taking alerts and gives queued deliveries up to one timeout to finish. */
    @Override
    public void close() {
        executor.shutdown();
        try {
            if (!executor.awaitTermination(timeout.toMillis(), TimeUnit.MILLISECONDS)) {
                executor.shutdownNow();
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            executor.shutdownNow();
        }
    }
}
