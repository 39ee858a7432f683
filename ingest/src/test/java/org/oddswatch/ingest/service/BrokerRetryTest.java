package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.service.BrokerWatch.BrokerRetry;

/** The backoff of a failing broker operation: 1, 2, 4, ... times the first delay, capped. */
class BrokerRetryTest {

    @Test
    void backoffDoublesUpToItsCapAndOneSuccessResetsIt() {
        BrokerRetry retry = new BrokerRetry(100, 1000);
        assertTrue(retry.due(0));
        assertTrue(retry.failed("down", 0), "the first failure of a run");
        assertEquals("down", retry.reason);
        assertFalse(retry.due(99));
        assertTrue(retry.due(100));
        assertFalse(retry.failed("still down", 100), "later failures are not the first");
        assertFalse(retry.due(299));
        assertTrue(retry.due(300), "second retry after 2 x 100");
        retry.failed("still down", 300);
        assertTrue(retry.due(700), "third after 4 x 100");
        retry.failed("still down", 700);
        assertFalse(retry.due(1499));
        assertTrue(retry.due(1500), "fourth after 8 x 100");
        retry.failed("still down", 1500);
        assertFalse(retry.due(2499));
        assertTrue(retry.due(2500), "capped at 1000, not 16 x 100");
        retry.failed("still down", 2500);
        retry.retryNow(2510);
        assertTrue(retry.due(2510), "due at once when the broker answers again");
        assertEquals(2600, retry.succeeded(2600), "time since the run's first failure");
        assertEquals(0, retry.failures);
        assertNull(retry.reason);
        assertEquals(-1, retry.succeeded(2700), "no run to end");
    }
}
