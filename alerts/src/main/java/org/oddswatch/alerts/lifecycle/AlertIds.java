package org.oddswatch.alerts.lifecycle;

import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.time.Instant;

/**
 * Deterministic episode ids: the first 24 hex digits (96 bits) of SHA-256 over
 * {@code stream \n rule \n subject label \n windowEnd (RFC 3339)} of the window at which the episode
 * was raised. No clock, no randomness: the same input always gives the same id, live or in replay.
 */
public final class AlertIds {

    private AlertIds() {
    }

    public static String episodeId(String stream, String rule, AlertSubject subject, Instant raisedWindowEnd) {
        return hex24(stream + "\n" + rule + "\n" + subject.label() + "\n" + raisedWindowEnd);
    }

    /**
     * The id of the incident an episode opened: the first 24 hex digits of SHA-256 over
     * {@code "incident\n" + episode id}, so it differs from every episode id yet follows from the
     * first episode alone.
     */
    public static String incidentId(String firstEpisodeId) {
        return hex24("incident\n" + firstEpisodeId);
    }

    private static String hex24(String text) {
        try {
            byte[] digest = MessageDigest.getInstance("SHA-256").digest(text.getBytes(StandardCharsets.UTF_8));
            StringBuilder hex = new StringBuilder(24);
            for (int i = 0; i < 12; i++) {
                hex.append(Character.forDigit((digest[i] >> 4) & 0xf, 16)).append(Character.forDigit(digest[i] & 0xf, 16));
            }
            return hex.toString();
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("SHA-256 is required by every Java platform", e);
        }
    }
}
