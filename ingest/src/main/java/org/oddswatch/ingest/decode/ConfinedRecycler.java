package org.oddswatch.ingest.decode;

import com.fasterxml.jackson.core.util.BufferRecycler;
import com.fasterxml.jackson.core.util.RecyclerPool;

/**
 * Jackson's parse buffers for a parser factory used by one thread at a time (a {@link RecordScanner}):
 * one recycler that is always the pool's answer, keeping its buffers in plain arrays. The default
 * pool looks the recycler up per parser (a thread-local) and hands buffers back with atomic stores;
 * with a parser per record, of some 150 bytes, those are a noticeable part of the work. Callers must
 * ensure one thread at a time, with a happens-before edge between threads (as an executor gives).
 */
final class ConfinedRecycler extends BufferRecycler {

    private final byte[][] bytes = new byte[8][];
    private final char[][] chars = new char[8][];

    /** A pool that always gives this recycler and never drops it. */
    final RecyclerPool<BufferRecycler> pool = new RecyclerPool<>() {
        private static final long serialVersionUID = 1L;

        @Override
        public BufferRecycler acquirePooled() {
            return ConfinedRecycler.this;
        }

        @Override
        public BufferRecycler acquireAndLinkPooled() {
            return ConfinedRecycler.this;
        }

        @Override
        public void releasePooled(BufferRecycler recycler) {
            // kept: the one recycler of this pool
        }
    };

    ConfinedRecycler() {
        super(8, 8);
    }

    @Override
    public byte[] allocByteBuffer(int index, int minSize) {
        byte[] buffer = index < bytes.length ? bytes[index] : null;
        if (buffer == null || buffer.length < Math.max(minSize, byteBufferLength(index))) {
            return balloc(Math.max(minSize, byteBufferLength(index)));
        }
        bytes[index] = null;
        return buffer;
    }

    @Override
    public void releaseByteBuffer(int index, byte[] buffer) {
        if (index < bytes.length && (bytes[index] == null || buffer.length > bytes[index].length)) {
            bytes[index] = buffer;
        }
    }

    @Override
    public char[] allocCharBuffer(int index, int minSize) {
        char[] buffer = index < chars.length ? chars[index] : null;
        if (buffer == null || buffer.length < Math.max(minSize, charBufferLength(index))) {
            return calloc(Math.max(minSize, charBufferLength(index)));
        }
        chars[index] = null;
        return buffer;
    }

    @Override
    public void releaseCharBuffer(int index, char[] buffer) {
        if (index < chars.length && (chars[index] == null || buffer.length > chars[index].length)) {
            chars[index] = buffer;
        }
    }

    @Override
    public boolean isLinkedWithPool() {
        return true;
    }

    @Override
    public void releaseToPool() {
        // nothing to hand back: the pool is this recycler
    }
}
