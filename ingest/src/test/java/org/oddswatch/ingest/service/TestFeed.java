package org.oddswatch.ingest.service;

import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;

/**
 * Seeded test events in the house scenario (a respiratory testing programme): id, collection time,
 * result, household contact, recent travel, age band, region. Positives are more likely with
 * household contact (log-odds +1.0) and travel (+0.5) over a base of -2.0; times advance through
 * the period with a small shuffle inside {@code jitter}, so some arrive out of order (within the
 * allowed lateness of the test definitions). Regions take turns, so no stream has a gap longer than
 * {@code regions * span / count + jitter} (kept under the one-day future-skew limit).
 */
final class TestFeed {

    static final String[] AGE_BANDS = {"0-17", "18-39", "40-64", "65+"};

    /** One event: its split value (also its record key), time and JSON bytes. */
    record Event(String region, Instant time, byte[] json) {
        String text() {
            return new String(json, StandardCharsets.UTF_8);
        }
    }

    private TestFeed() {
    }

    static List<Event> events(long seed, int count, Instant start, Duration span, Duration jitter, String... regions) {
        return events(seed, count, start, span, jitter, null, 0, regions);
    }

    /**
     * As above, with a drift: from {@code driftFrom} on, household contact adds {@code extraLogOdds}
     * to the log-odds of a positive result (so its odds ratio moves by exp(extraLogOdds)).
     */
    static List<Event> events(long seed, int count, Instant start, Duration span, Duration jitter, Instant driftFrom,
                              double extraLogOdds, String... regions) {
        Random random = new Random(seed);
        List<Event> events = new ArrayList<>(count);
        long step = span.toMillis() / count;
        for (int i = 0; i < count; i++) {
            long shift = jitter.isZero() ? 0 : (long) (random.nextDouble() * jitter.toMillis());
            Instant time = start.plusMillis(i * step - shift);
            String region = regions[i % regions.length];
            boolean household = random.nextDouble() < 0.3;
            boolean travel = random.nextDouble() < 0.2;
            String age = AGE_BANDS[random.nextInt(AGE_BANDS.length)];
            boolean drifted = driftFrom != null && !time.isBefore(driftFrom);
            double logit = -2.0 + (household ? 1.0 + (drifted ? extraLogOdds : 0) : 0) + (travel ? 0.5 : 0)
                    + (age.equals("65+") ? 0.4 : 0);
            boolean positive = random.nextDouble() < 1 / (1 + Math.exp(-logit));
            String json = "{\"id\":\"t-" + seed + "-" + i + "\",\"collectedAt\":\"" + time + "\",\"result\":\""
                    + (positive ? "positive" : "negative") + "\",\"region\":\"" + region
                    + "\",\"exposure\":{\"household\":\"" + (household ? "yes" : "no") + "\",\"travel\":\""
                    + (travel ? "yes" : "no") + "\"},\"ageBand\":\"" + age + "\"}";
            events.add(new Event(region, time, json.getBytes(StandardCharsets.UTF_8)));
        }
        return events;
    }
}
