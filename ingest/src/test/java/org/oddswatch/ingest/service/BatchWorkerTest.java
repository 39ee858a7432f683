package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

class BatchWorkerTest {

    @Test
    @Timeout(30)
    void batchesRunOneAtATimeInOrderAndAwaitTellsWhetherItWaited() throws Exception {
        try (BatchWorker worker = new BatchWorker("test-worker")) {
            assertFalse(worker.hasBatch());
            assertFalse(worker.await(), "nothing in flight: no wait");
            List<Integer> seen = new ArrayList<>();
            CountDownLatch release = new CountDownLatch(1);
            worker.submit(() -> {
                try {
                    release.await();
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                }
                seen.add(1);
            });
            assertTrue(worker.hasBatch());
            assertThrows(IllegalStateException.class, () -> worker.submit(() -> seen.add(99)),
                    "a second batch before the first is awaited");
            Thread waiting = Thread.currentThread();
            Thread releaser = new Thread(() -> {
                // release the batch only once this test's thread is blocked in await()
                while (!blockedInAwait(waiting)) {
                    Thread.onSpinWait();
                }
                release.countDown();
            });
            releaser.start();
            assertTrue(worker.await(), "the batch was still running");
            releaser.join();
            assertFalse(worker.hasBatch());
            worker.submit(() -> seen.add(2));
            worker.await();
            assertEquals(List.of(1, 2), seen, "the rejected batch never ran; the others in order");
        }
    }

    private static boolean blockedInAwait(Thread thread) {
        if (thread.getState() != Thread.State.WAITING) {
            return false;
        }
        for (StackTraceElement frame : thread.getStackTrace()) {
            if (frame.getClassName().equals(BatchWorker.class.getName()) && frame.getMethodName().equals("await")) {
                return true;
            }
        }
        return false;
    }

    @Test
    void whatABatchThrowsComesOutOfAwaitAndTheWorkerGoesOn() {
        try (BatchWorker worker = new BatchWorker("test-worker")) {
            IllegalArgumentException failure = new IllegalArgumentException("bad batch");
            worker.submit(() -> {
                throw failure;
            });
            assertSame(failure, assertThrows(IllegalArgumentException.class, worker::await));
            worker.submit(() -> {
                throw new AssertionError("an error too");
            });
            assertThrows(AssertionError.class, worker::await);
            List<String> after = new ArrayList<>();
            worker.submit(() -> after.add("ran"));
            worker.await();
            assertEquals(List.of("ran"), after);
        }
    }
}
