package org.oddswatch.ingest.decode;

/**
 * Well-formedness checks of UTF-8 bytes and UTF-16 text.
 *
 * <p>UTF-8 is checked against the table of well-formed byte sequences of the Unicode Standard
 * (version 15.0, section 3.9, table 3-7): no overlong forms ({@code C0 AF} for "/"), no encoded
 * surrogates ({@code ED A0 80}), nothing above U+10FFFF ({@code F4 90 80 80}), no truncated or
 * stray continuation bytes. Java's own UTF-8 decoder with {@code REPORT} applies the same table;
 * Jackson's parser does not check the first three, which is why records are checked here first.
 */
public final class Unicode {

    private Unicode() {
    }

    /** The offset of the first byte of {@code bytes[from, to)} that is not well-formed UTF-8, or -1. */
    public static int firstInvalidUtf8(byte[] bytes, int from, int to) {
        int i = from;
        while (i < to) {
            int b = bytes[i];
            if (b >= 0) {
                i++;
                continue;
            }
            b &= 0xFF;
            int length;
            int low = 0x80;
            int high = 0xBF;
            if (b >= 0xC2 && b <= 0xDF) {
                length = 2;
            } else if (b >= 0xE0 && b <= 0xEF) {
                length = 3;
                if (b == 0xE0) {
                    low = 0xA0; // else overlong
                } else if (b == 0xED) {
                    high = 0x9F; // else a surrogate
                }
            } else if (b >= 0xF0 && b <= 0xF4) {
                length = 4;
                if (b == 0xF0) {
                    low = 0x90; // else overlong
                } else if (b == 0xF4) {
                    high = 0x8F; // else above U+10FFFF
                }
            } else {
                return i; // C0, C1 (overlong), F5..FF, or a continuation byte without a lead
            }
            if (i + length > to) {
                return i;
            }
            int second = bytes[i + 1] & 0xFF;
            if (second < low || second > high) {
                return i;
            }
            for (int k = 2; k < length; k++) {
                int next = bytes[i + k] & 0xFF;
                if (next < 0x80 || next > 0xBF) {
                    return i;
                }
            }
            i += length;
        }
        return -1;
    }

    /** True when {@code text} holds a surrogate that is not part of a pair. */
    public static boolean hasUnpairedSurrogate(CharSequence text) {
        return firstUnpaired(text) >= 0;
    }

    /**
     * {@code text} with every unpaired surrogate replaced by U+FFFD, so that it can be encoded
     * (written to a file or a topic) whatever it holds; the same string when there is none.
     */
    public static String wellFormed(String text) {
        if (text == null || firstUnpaired(text) < 0) {
            return text;
        }
        StringBuilder b = new StringBuilder(text.length());
        for (int i = 0; i < text.length(); i++) {
            char c = text.charAt(i);
            if (Character.isHighSurrogate(c) && i + 1 < text.length() && Character.isLowSurrogate(text.charAt(i + 1))) {
                b.append(c).append(text.charAt(++i));
            } else {
                b.append(Character.isSurrogate(c) ? '\uFFFD' : c);
            }
        }
        return b.toString();
    }

    private static int firstUnpaired(CharSequence text) {
        for (int i = 0; i < text.length(); i++) {
            char c = text.charAt(i);
            if (Character.isHighSurrogate(c) && i + 1 < text.length() && Character.isLowSurrogate(text.charAt(i + 1))) {
                i++;
            } else if (Character.isSurrogate(c)) {
                return i;
            }
        }
        return -1;
    }
}
