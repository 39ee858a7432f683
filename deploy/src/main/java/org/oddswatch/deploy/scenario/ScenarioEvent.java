package org.oddswatch.deploy.scenario;

import java.time.Instant;

/**
 * One simulated record of the testing programme.
 *
 * @param id event id, unique per clean event ({@code rsp-00000042}); a duplicate repeats the id
 * @param emittedAt simulated time at which the record is sent (the feed's clock); a sandbox paces on it
 * @param collectedAt event time written into the record; equals {@code emittedAt} except for late records
 * @param positive the test result
 * @param person exposures and demographics
 * @param probability the true probability of a positive result that generated this record
 * @param defect what is wrong with the record, {@link RecordDefect#NONE} for a clean event
 */
public record ScenarioEvent(String id, Instant emittedAt, Instant collectedAt, boolean positive, Person person,
                            double probability, RecordDefect defect) {

    /** JSON field names (pointers in the example definitions: /id, /collectedAt, /result, /exposure/household, ...). */
    public static final String ID = "id";
    public static final String COLLECTED_AT = "collectedAt";
    public static final String RESULT = "result";

    /**
     * Exposures and demographics of the tested person.
     *
     * @param household household contact with a confirmed case
     * @param travel recent travel
     * @param ageBand one of 0-17, 18-39, 40-64, 65+
     * @param sex female or male
     * @param clinic the testing clinic
     * @param region the clinic's region (north, south), a natural split field
     */
    public record Person(boolean household, boolean travel, String ageBand, String sex, String clinic, String region) {
    }

    /** The result label in the JSON: {@code positive} or {@code negative}. */
    public String result() {
        return positive ? "positive" : "negative";
    }

    /**
     * The record as one line of JSON (no line break), for example
     * <pre>{@code
     * {"id":"rsp-00000001","collectedAt":"2026-01-05T00:04:31Z","result":"negative",
     *  "exposure":{"household":"no","travel":"no"},"ageBand":"18-39","sex":"female",
     *  "clinic":"harbourside","region":"north"}
     * }</pre>
     * Defective records carry their defect in the text: cut short, an unclear result, no or a bad time.
     */
    public String toJson() {
        StringBuilder b = new StringBuilder(200);
        b.append("{\"id\":\"").append(id).append('"');
        switch (defect) {
            case MISSING_TIME -> { }
            case BAD_TIME -> b.append(",\"collectedAt\":\"").append("sometime last week").append('"');
            default -> b.append(",\"collectedAt\":\"").append(collectedAt).append('"');
        }
        b.append(",\"result\":\"").append(defect == RecordDefect.BAD_OUTCOME ? "unclear" : result()).append('"');
        b.append(",\"exposure\":{\"household\":\"").append(person.household() ? "yes" : "no")
                .append("\",\"travel\":\"").append(person.travel() ? "yes" : "no").append("\"}");
        b.append(",\"ageBand\":\"").append(person.ageBand()).append('"');
        b.append(",\"sex\":\"").append(person.sex()).append('"');
        b.append(",\"clinic\":\"").append(person.clinic()).append('"');
        b.append(",\"region\":\"").append(person.region()).append("\"}");
        if (defect == RecordDefect.MALFORMED_JSON) {
            return b.substring(0, b.length() / 2);
        }
        return b.toString();
    }

    /** The Kafka record key used by the sandbox and {@code simulate --topic}: the region (one stream per partition). */
    public String key() {
        return person.region();
    }
}
