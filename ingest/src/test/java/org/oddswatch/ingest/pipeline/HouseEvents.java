package org.oddswatch.ingest.pipeline;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;

/**
 * Seeded test events of the house scenario: a regional respiratory-illness testing programme.
 * True model (log-odds): -2.2 + 0.9 household contact + 0.5 recent travel + 0.4 (age 65+)
 * - 0.3 (age 0-17); age band 40-64 and sex have no effect. About 3% of events lack the age band.
 */
public final class HouseEvents {

    private static final String[] BANDS = {"0-17", "18-39", "40-64", "65+"};

    private HouseEvents() {
    }

    /** One event as a JSON line. */
    public static String json(String id, Instant time, String region, boolean household, boolean travel, String band,
                              String sex, boolean positive) {
        StringBuilder b = new StringBuilder(160);
        b.append("{\"id\":\"").append(id).append("\",\"collectedAt\":\"").append(time).append('"')
                .append(",\"result\":\"").append(positive ? "positive" : "negative").append('"')
                .append(",\"region\":\"").append(region).append('"')
                .append(",\"exposure\":{\"household\":\"").append(household ? "yes" : "no")
                .append("\",\"travel\":").append(travel).append('}');
        if (band != null) {
            b.append(",\"ageBand\":\"").append(band).append('"');
        }
        return b.append(",\"sex\":\"").append(sex).append("\"}").toString();
    }

    /** One generated event with its true values. */
    public record HouseEvent(String id, Instant time, String region, boolean household, boolean travel, String band,
                             String sex, boolean positive) {

        public String json() {
            return HouseEvents.json(id, time, region, household, travel, band, sex, positive);
        }

        /** A CSV row matching {@link #CSV_HEADER}; a missing band is an empty cell. */
        public String csv() {
            return String.join(",", id, time.toString(), positive ? "positive" : "negative", region,
                    household ? "yes" : "no", Boolean.toString(travel), band == null ? "" : band, sex);
        }
    }

    /** CSV header whose nested names give the same JSON Pointers as the JSON events. */
    public static final String CSV_HEADER = "id,collectedAt,result,region,exposure/household,exposure/travel,ageBand,sex";

    /**
     * {@code n} events with times spread evenly over {@code [start, start + spanMillis)} in
     * arrival order, each shifted back by up to {@code jitterMillis} (so arrival is slightly out of
     * order), regions taken in turn.
     */
    public static List<HouseEvent> events(long seed, int n, Instant start, long spanMillis, long jitterMillis,
                                          String... regions) {
        return events(seed, n, start, spanMillis, jitterMillis, null, 0, regions);
    }

    /**
     * As {@link #events(long, int, Instant, long, long, String...)}, with the household-contact
     * log-odds ratio raised by {@code householdShift} for events from {@code shiftFrom} on (drift).
     */
    public static List<HouseEvent> events(long seed, int n, Instant start, long spanMillis, long jitterMillis,
                                          Instant shiftFrom, double householdShift, String... regions) {
        Random random = new Random(seed);
        List<HouseEvent> events = new ArrayList<>(n);
        for (int i = 0; i < n; i++) {
            long offset = spanMillis * i / n - (jitterMillis == 0 ? 0 : (long) (random.nextDouble() * jitterMillis));
            Instant time = start.plusMillis(Math.max(0, offset));
            boolean household = random.nextDouble() < 0.3;
            boolean travel = random.nextDouble() < 0.2;
            String band = random.nextDouble() < 0.03 ? null : BANDS[random.nextInt(BANDS.length)];
            String sex = random.nextBoolean() ? "female" : "male";
            double shift = shiftFrom != null && !time.isBefore(shiftFrom) ? householdShift : 0;
            double eta = -2.2 + (household ? 0.9 + shift : 0) + (travel ? 0.5 : 0)
                    + ("65+".equals(band) ? 0.4 : 0) + ("0-17".equals(band) ? -0.3 : 0);
            boolean positive = random.nextDouble() < 1 / (1 + Math.exp(-eta));
            events.add(new HouseEvent("ev-" + i, time, regions[i % regions.length], household, travel, band, sex,
                    positive));
        }
        return events;
    }

    /** {@link #events} as JSON lines. */
    public static List<String> generate(long seed, int n, Instant start, long spanMillis, long jitterMillis,
                                        String... regions) {
        List<String> lines = new ArrayList<>(n);
        for (HouseEvent event : events(seed, n, start, spanMillis, jitterMillis, regions)) {
            lines.add(event.json());
        }
        return lines;
    }
}
