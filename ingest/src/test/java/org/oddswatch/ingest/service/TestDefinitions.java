package org.oddswatch.ingest.service;

import java.util.Map;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

/** Monitor definitions for the Kafka tests, one set of topics per test. */
final class TestDefinitions {

    private TestDefinitions() {
    }

    /**
     * A definition with one monitor, split by region when {@code split}, windows of 28 days every
     * 7 days with 2 days' lateness.
     *
     * @param prefix prefix of the input and output topic names
     * @param idleTimeout ISO-8601 idle timeout (a very long one keeps windows open until the
     *     watermark closes them)
     */
    static String yaml(String bootstrap, String prefix, String group, boolean split, String idleTimeout) {
        return yaml(bootstrap, prefix + "-tests", prefix, group, split ? 8 : 0, idleTimeout);
    }

    /**
     * @param input the input topic
     * @param maxStreams cap of the region split, 0 for no split
     */
    static String yaml(String bootstrap, String input, String prefix, String group, int maxStreams, String idleTimeout) {
        return """
                kafka:
                  bootstrap.servers: %s
                service:
                  http: 127.0.0.1:0
                  groupId: %s
                  refresh: PT1H
                  idleTimeout: %s
                  rebuildMargin: PT1H
                monitors:
                  - name: resp
                    input: {topic: %s}
                    event:
                      id: /id
                      time: /collectedAt
                      maxFutureSkew: P1D
                      outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
                %s
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                      - {name: recent_travel, field: /exposure/travel, kind: binary, level: "yes", reference: "no", watched: true}
                      - name: age_band
                        field: /ageBand
                        kind: categorical
                        levels: ["0-17", "18-39", "40-64", "65+"]
                        reference: "18-39"
                        undeclared: reject
                    window: {width: P28D, step: P7D, lateness: P2D, align: 2026-01-05T00:00:00Z}
                    estimates: {level: 0.95, prevalenceInterval: wilson}
                    outputs:
                      estimatesTopic: %s-estimates
                      rejectsTopic: %s-rejects
                      alertsTopic: %s-alerts
                """.formatted(bootstrap, group, idleTimeout, input,
                maxStreams > 0 ? "    split: {field: /region, maxStreams: " + maxStreams + "}" : "", prefix, prefix, prefix);
    }

    /**
     * One unsplit monitor with a fixed baseline period of eight weeks from 2026-01-05 and an
     * odds-ratio drift rule on household contact (limit 3, clear below 2), for the alert tests.
     *
     * @param webhookUrl the monitor's {@code outputs.webhook} url, or null for none
     */
    static String driftYaml(String bootstrap, String prefix, String input, String webhookUrl) {
        return """
                kafka:
                  bootstrap.servers: %s
                service: {groupId: %s-group, refresh: PT1H, idleTimeout: P3650D}
                monitors:
                  - name: resp
                    input: {topic: %s}
                    event:
                      id: /id
                      time: /collectedAt
                      outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no", watched: true}
                      - {name: recent_travel, field: /exposure/travel, kind: binary, level: "yes", reference: "no"}
                    window: {width: P28D, step: P7D, lateness: P2D, align: 2026-01-05T00:00:00Z}
                    baseline: {from: 2026-01-05T00:00:00Z, to: 2026-03-02T00:00:00Z}
                    rules:
                      guard: {minEvents: 200}
                      oddsRatioDrift: {limit: 3.0, clearLimit: 2.0, consecutive: 1, clearAfter: 2, terms: [household_contact]}
                      calibration: {enabled: false}
                      cusum: {enabled: false}
                    outputs:
                      estimatesTopic: %s-estimates
                      rejectsTopic: %s-rejects
                      alertsTopic: %s-alerts
                %s
                """.formatted(bootstrap, prefix, input, prefix, prefix, prefix,
                webhookUrl == null ? "" : "      webhook: {url: \"" + webhookUrl + "\", timeout: PT5S, attempts: 2, send: episodes}");
    }

    static MonitorConfig config(String yaml) {
        try {
            return DefinitionLoader.parse("test.yaml", yaml, Map.of(), null);
        } catch (DefinitionException e) {
            throw new IllegalStateException(e.getMessage(), e);
        }
    }
}
