package org.oddswatch.ingest.decode;

import java.nio.ByteBuffer;
import java.nio.CharBuffer;
import java.nio.charset.StandardCharsets;

/**
 * Well-formedness of UTF-8 bytes and UTF-16 text. UTF-8 is checked by the JDK's decoder, which reports
 * every sequence outside table 3-7 of the Unicode Standard (15.0, section 3.9): overlong forms
 * ({@code C0 AF}), encoded surrogates ({@code ED A0 80}), code points above U+10FFFF, truncated
 * sequences and stray continuation bytes. Jackson's parser lets the first three through.
 */
public final class Unicode {

    private Unicode() {
    }

    /** The offset of the first byte of {@code bytes[from, to)} that is not well-formed UTF-8, or -1. */
    public static int firstInvalidUtf8(byte[] bytes, int from, int to) {
        int ascii = from;
        while (ascii < to && bytes[ascii] >= 0) {
            ascii++;
        }
        ByteBuffer in = ByteBuffer.wrap(bytes, ascii, to - ascii);
        return ascii < to && StandardCharsets.UTF_8.newDecoder() // reports malformed input
                .decode(in, CharBuffer.allocate(to - ascii), true).isError() ? in.position() : -1;
    }

    /** True when {@code text} holds a surrogate that is not part of a pair. */
    public static boolean hasUnpairedSurrogate(String text) {
        for (int i = 0, c; i < text.length(); i += Character.charCount(c)) {
            if (isSurrogate(c = text.codePointAt(i))) { // a lone surrogate comes back as itself
                return true;
            }
        }
        return false;
    }

    /** {@code text} with every unpaired surrogate replaced by U+FFFD, so that it can be encoded. */
    public static String wellFormed(String text) {
        return text == null || !hasUnpairedSurrogate(text) ? text : text.codePoints()
                .map(c -> isSurrogate(c) ? 0xFFFD : c)
                .collect(StringBuilder::new, StringBuilder::appendCodePoint, StringBuilder::append).toString();
    }

    private static boolean isSurrogate(int codePoint) {
        return codePoint >= Character.MIN_SURROGATE && codePoint <= Character.MAX_SURROGATE;
    }
}
