package org.oddswatch.ingest.definition;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.Map;
import org.junit.jupiter.api.Test;

/** {@code outputs.withholdCountsBelow}: default 5, a set value, and a value that would switch the rule off. */
class SmallCellSettingTest {

    private static String yaml(String outputs) {
        return """
                monitors:
                  - name: resp
                    input: {topic: tests}
                    event:
                      id: /id
                      time: /collectedAt
                      outcome: {field: /result, positive: ["positive"], negative: ["negative"]}
                    terms:
                      - {name: household_contact, field: /exposure/household, kind: binary, level: "yes", reference: "no"}
                    window: {width: P28D, step: P7D}
                %s""".formatted(outputs);
    }

    private static MonitorDefinition monitor(String outputs) throws DefinitionException {
        return DefinitionLoader.parse("monitors.yaml", yaml(outputs), Map.of(), null).monitors().get(0);
    }

    @Test
    void theLimitDefaultsToFiveAndCanBeRaised() throws Exception {
        assertEquals(5, monitor("").outputs().smallCells().limit());
        assertEquals(11, monitor("    outputs: {withholdCountsBelow: 11}\n").outputs().smallCells().limit());
    }

    @Test
    void aLimitBelowTwoNamesFileLineAndKey() {
        DefinitionException e = assertThrows(DefinitionException.class,
                () -> monitor("    outputs:\n      withholdCountsBelow: 1\n"));
        assertEquals("monitors.yaml:12: monitors[0].outputs.withholdCountsBelow: must be from 2 to 1000 (counts from 1"
                + " to this minus 1 are withheld from every output)", e.getMessage());
    }
}
