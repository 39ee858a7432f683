package org.oddswatch.alerts.output;

import io.micrometer.core.instrument.FunctionCounter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.binder.MeterBinder;
import java.io.IOException;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.net.http.HttpTimeoutException;
import java.time.Duration;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ArrayBlockingQueue;
import java.util.concurrent.RejectedExecutionException;
import java.util.concurrent.ThreadPoolExecutor;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.Incident;
import org.oddswatch.alerts.metrics.OddswatchMeters;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * HTTP POST of each incident message's JSON, or (for a receiver that wants every episode) each alert
 * message's JSON ({@code Content-Type: application/json}) to one monitor's URL: {@link Carries}.
 * Delivery runs on one daemon thread fed by a bounded queue, so {@link #incident} and {@link #alert}
 * only enqueue and
 * returns at once: the poll loop never waits for a receiver. Each attempt has a request timeout; a
 * 2xx response is success; any other status, an I/O error or a timeout is retried up to
 * {@code attempts} attempts in all, waiting {@code backoff}, then twice that, and so on (at most
 * 60 s). When every attempt failed, or the queue is full, the message is dropped from this sink (its
 * episodes are still on the alerts topic), counted and logged at ERROR. The
 * {@code Idempotency-Key} header carries {@code <incident id>:<revision>} (incidents) or
 * {@code <alert id>:<state>:<windowEnd>} (episodes) so a receiver can discard a duplicate of a
 * retried delivery.
 *
 * <p>Meters ({@link #bindTo}): {@value OddswatchMeters#WEBHOOK_ATTEMPTS} by {@code monitor} and
 * {@code outcome} ({@code success}, {@code status}, {@code error}, {@code timeout}) and
 * {@value OddswatchMeters#WEBHOOK_FAILURES} by {@code monitor} and {@code reason}
 * ({@code attempts-exhausted}, {@code queue-full}, {@code interrupted}).
 */
public final class WebhookSink implements OutputSink, MeterBinder {

    private static final Logger LOG = LoggerFactory.getLogger(WebhookSink.class);
    private static final List<String> OUTCOMES = List.of("success", "status", "error", "timeout");
    private static final List<String> REASONS = List.of("attempts-exhausted", "queue-full", "interrupted");

    /** What a webhook posts. */
    public enum Carries {
        /** One message per change of an incident (opened, updated, resolved): what on-call receives by default. */
        INCIDENTS,
        /** Every alert message of every episode, as on the alerts topic. */
        EPISODES
    }

    private final String monitor;
    private final Carries carries;
    private final URI url;
    private final Duration timeout;
    private final int attempts;
    private final Duration backoff;
    private final HttpClient client;
    private final ThreadPoolExecutor executor;
    private final Map<String, AtomicLong> attemptsByOutcome = counts(OUTCOMES);
    private final Map<String, AtomicLong> failuresByReason = counts(REASONS);

    /**
     * @param monitor the monitor whose alerts this sink posts (a meter tag)
     * @param url where to POST
     * @param timeout per-attempt request (and connect) timeout
     * @param attempts attempts in all, at least 1
     * @param backoff wait before the first retry; doubled for each further retry
     * @param queueCapacity alerts waiting for delivery before new ones are dropped
     */
    public WebhookSink(String monitor, URI url, Duration timeout, int attempts, Duration backoff, int queueCapacity) {
        this(monitor, Carries.EPISODES, url, timeout, attempts, backoff, queueCapacity);
    }

    /**
     * @param monitor the monitor whose messages this sink posts (a meter tag)
     * @param carries incident messages or every alert message
     * @param url where to POST
     * @param timeout per-attempt request (and connect) timeout
     * @param attempts attempts in all, at least 1
     * @param backoff wait before the first retry; doubled for each further retry
     * @param queueCapacity messages waiting for delivery before new ones are dropped
     */
    public WebhookSink(String monitor, Carries carries, URI url, Duration timeout, int attempts, Duration backoff,
                       int queueCapacity) {
        if (attempts < 1 || queueCapacity < 1) {
            throw new IllegalArgumentException("attempts and queue capacity must be at least 1");
        }
        this.monitor = monitor;
        this.carries = carries;
        this.url = url;
        this.timeout = timeout;
        this.attempts = attempts;
        this.backoff = backoff;
        this.client = HttpClient.newBuilder().connectTimeout(timeout).build();
        this.executor = new ThreadPoolExecutor(1, 1, 0, TimeUnit.MILLISECONDS, new ArrayBlockingQueue<>(queueCapacity),
                runnable -> {
                    Thread t = new Thread(runnable, "oddswatch-webhook");
                    t.setDaemon(true);
                    return t;
                });
    }

    /** Every alert message; defaults: 500 ms first backoff, 1000 queued messages. */
    public WebhookSink(String monitor, URI url, Duration timeout, int attempts) {
        this(monitor, url, timeout, attempts, Duration.ofMillis(500), 1000);
    }

    /** Defaults: 500 ms first backoff, 1000 queued messages. */
    public WebhookSink(String monitor, Carries carries, URI url, Duration timeout, int attempts) {
        this(monitor, carries, url, timeout, attempts, Duration.ofMillis(500), 1000);
    }

    private static Map<String, AtomicLong> counts(List<String> keys) {
        Map<String, AtomicLong> map = new LinkedHashMap<>();
        keys.forEach(key -> map.put(key, new AtomicLong()));
        return map;
    }

    @Override
    public void bindTo(MeterRegistry registry) {
        attemptsByOutcome.forEach((outcome, count) -> FunctionCounter.builder(OddswatchMeters.WEBHOOK_ATTEMPTS, count,
                AtomicLong::get).description("Webhook delivery attempts by outcome").tags("monitor", monitor,
                "outcome", outcome).register(registry));
        failuresByReason.forEach((reason, count) -> FunctionCounter.builder(OddswatchMeters.WEBHOOK_FAILURES, count,
                AtomicLong::get).description("Alerts the webhook could not deliver").tags("monitor", monitor,
                "reason", reason).register(registry));
    }

    @Override
    public void alert(Alert alert, Published published) {
        if (carries == Carries.EPISODES) {
            enqueue("alert " + alert.id() + " (" + alert.state() + ")",
                    alert.id() + ":" + alert.state() + ":" + alert.windowEnd(), published.json());
        }
    }

    @Override
    public void incident(Incident incident, Published published) {
        if (carries == Carries.INCIDENTS) {
            enqueue("incident " + incident.id() + " (" + incident.change() + ", revision " + incident.revision() + ")",
                    incident.id() + ":" + incident.revision(), published.json());
        }
    }

    private void enqueue(String what, String idempotencyKey, String body) {
        try {
            executor.execute(() -> deliver(what, idempotencyKey, body));
        } catch (RejectedExecutionException e) {
            failuresByReason.get("queue-full").incrementAndGet();
            LOG.error("webhook {}: queue full, {} dropped from this sink", url, what);
        }
    }

    private void deliver(String what, String idempotencyKey, String body) {
        HttpRequest request = HttpRequest.newBuilder(url).timeout(timeout)
                .header("Content-Type", "application/json")
                .header("Idempotency-Key", idempotencyKey)
                .POST(HttpRequest.BodyPublishers.ofString(body)).build();
        long wait = backoff.toMillis();
        for (int attempt = 1; attempt <= attempts; attempt++) {
            String outcome;
            try {
                HttpResponse<Void> response = client.send(request, HttpResponse.BodyHandlers.discarding());
                if (response.statusCode() / 100 == 2) {
                    attemptsByOutcome.get("success").incrementAndGet();
                    return;
                }
                outcome = "status";
                LOG.warn("webhook {}: {} attempt {}/{} got HTTP {}", url, what, attempt, attempts,
                        response.statusCode());
            } catch (HttpTimeoutException e) {
                outcome = "timeout";
                LOG.warn("webhook {}: {} attempt {}/{} timed out after {}", url, what, attempt, attempts,
                        timeout);
            } catch (IOException e) {
                outcome = "error";
                LOG.warn("webhook {}: {} attempt {}/{} failed: {}", url, what, attempt, attempts,
                        e.toString());
            } catch (InterruptedException e) {
                interrupted(what);
                return;
            }
            attemptsByOutcome.get(outcome).incrementAndGet();
            if (attempt < attempts) {
                try {
                    Thread.sleep(wait);
                } catch (InterruptedException e) {
                    interrupted(what);
                    return;
                }
                wait = Math.min(wait * 2, 60_000);
            }
        }
        failuresByReason.get("attempts-exhausted").incrementAndGet();
        LOG.error("webhook {}: {} not delivered after {} attempts", url, what, attempts);
    }

    private void interrupted(String what) {
        Thread.currentThread().interrupt();
        failuresByReason.get("interrupted").incrementAndGet();
        LOG.error("webhook {}: interrupted, {} not delivered", url, what);
    }

    /** Alerts delivered with a 2xx response. */
    public long delivered() {
        return attemptsByOutcome.get("success").get();
    }

    /** Alerts given up on: attempts exhausted, dropped on a full queue, or interrupted. */
    public long failures() {
        return failuresByReason.values().stream().mapToLong(AtomicLong::get).sum();
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
