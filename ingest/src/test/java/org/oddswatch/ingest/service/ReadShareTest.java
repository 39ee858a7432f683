package org.oddswatch.ingest.service;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class ReadShareTest {

    @Test
    void startsAtHalfAndMovesTowardTheThreadThatWouldOtherwiseWait() {
        ReadShare share = new ReadShare();
        assertEquals(1000, share.of(2000));
        share.adjust(true); // the poll thread waited: it reads more
        assertEquals(33.0 / 64, share.fraction());
        share.adjust(false);
        share.adjust(false); // the worker was done first: it reads more
        assertEquals(31.0 / 64, share.fraction());
        assertEquals(968, share.of(2000)); // 2000 * 31 / 64 = 968.75, rounded down
    }

    @Test
    void staysWithinNoneAndAll() {
        ReadShare share = new ReadShare();
        for (int i = 0; i < 100; i++) {
            share.adjust(false);
        }
        assertEquals(0, share.of(2000));
        for (int i = 0; i < 200; i++) {
            share.adjust(true);
        }
        assertEquals(2000, share.of(2000));
        assertEquals(0, share.of(0));
    }
}
