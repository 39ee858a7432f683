package org.oddswatch.ingest.definition;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.output.WebhookSink;

/** {@code outputs.webhook.send}: incidents by default, episodes on request, anything else an error naming file, line and key. */
class WebhookSendSettingTest {

    private static MonitorDefinition monitor(String webhook) throws DefinitionException {
        String yaml = """
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
                    outputs:
                      webhook:
                        url: http://127.0.0.1:9/hook
                %s""".formatted(webhook);
        return DefinitionLoader.parse("monitors.yaml", yaml, Map.of(), null).monitors().get(0);
    }

    @Test
    void incidentsUnlessEpisodesAreAskedFor() throws Exception {
        assertEquals(WebhookSink.Carries.INCIDENTS, monitor("").outputs().webhook().send());
        assertEquals(WebhookSink.Carries.EPISODES, monitor("        send: episodes\n").outputs().webhook().send());
    }

    @Test
    void anUnknownValueNamesFileLineAndKey() {
        DefinitionException e = assertThrows(DefinitionException.class, () -> monitor("        send: pager\n"));
        assertEquals("monitors.yaml:14: monitors[0].outputs.webhook.send: 'pager' is not incidents (one message per"
                + " change of an incident) or episodes (every alert message)", e.getMessage());
    }
}
