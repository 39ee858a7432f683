package org.oddswatch.broker;

import java.util.Map;
import java.util.concurrent.ExecutionException;
import org.junit.jupiter.api.extension.AfterAllCallback;
import org.junit.jupiter.api.extension.BeforeAllCallback;
import org.junit.jupiter.api.extension.ExtensionContext;

/**
 * The {@link EmbeddedBroker} as a JUnit 5 extension, shared by all tests of a class, with the
 * client steps of {@link TestBroker}:
 * <pre>{@code
 * @RegisterExtension
 * static final EmbeddedBrokerExtension KAFKA = new EmbeddedBrokerExtension();
 * }</pre>
 * Fault tests stop the broker and restart it on the same port ({@link #stopBroker()},
 * {@link #restartBroker()}).
 */
public final class EmbeddedBrokerExtension implements TestBroker, BeforeAllCallback, AfterAllCallback {

    private final Map<String, String> brokerSettings;
    private EmbeddedBroker broker;

    public EmbeddedBrokerExtension() {
        this(Map.of());
    }

    /** @param brokerSettings further broker settings (for instance {@code group.initial.rebalance.delay.ms}) */
    public EmbeddedBrokerExtension(Map<String, String> brokerSettings) {
        this.brokerSettings = Map.copyOf(brokerSettings);
    }

    @Override
    public synchronized void beforeAll(ExtensionContext context) throws Exception {
        if (broker == null) {
            broker = EmbeddedBroker.start(0, brokerSettings);
        }
    }

    @Override
    public synchronized void afterAll(ExtensionContext context) throws Exception {
        if (broker != null) {
            try {
                broker.close();
            } finally {
                broker = null;
            }
        }
    }

    @Override
    public String bootstrapServers() {
        return running().bootstrapServers();
    }

    /** See {@link EmbeddedBroker#stopBroker()}. */
    public void stopBroker() {
        running().stopBroker();
    }

    /** See {@link EmbeddedBroker#restartBroker()}. */
    public void restartBroker() {
        try {
            running().restartBroker();
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException(e);
        } catch (ExecutionException e) {
            throw new IllegalStateException("could not restart the embedded broker: " + e.getMessage(), e);
        }
    }

    private synchronized EmbeddedBroker running() {
        if (broker == null) {
            throw new IllegalStateException("the embedded broker is not started");
        }
        return broker;
    }
}
