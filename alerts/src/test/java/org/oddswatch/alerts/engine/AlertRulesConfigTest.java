package org.oddswatch.alerts.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;

/** Binding of the {@code rules:} mapping the way the definition loader does it (YAML tree, then convertValue). */
class AlertRulesConfigTest {

    private static final ObjectMapper YAML = new ObjectMapper(new YAMLFactory());

    private static AlertRulesConfig bind(String yaml) throws Exception {
        Map<?, ?> tree = YAML.readValue(yaml, Map.class);
        return Json.mapper().convertValue(tree, AlertRulesConfig.class);
    }

    @Test
    void presentSectionsGetDefaultsAbsentOnesStayOff() throws Exception {
        AlertRulesConfig c = bind("""
                oddsRatioDrift: {}
                calibration:
                  observedExpected: {max: 1.5}
                """);
        assertEquals(3.0, c.oddsRatioDrift().limit());
        assertEquals(2.0, c.oddsRatioDrift().clearLimit());
        assertEquals(1, c.oddsRatioDrift().consecutive());
        assertEquals(2, c.oddsRatioDrift().clearAfter());
        assertTrue(c.oddsRatioDrift().terms().isEmpty());
        assertNull(c.calibration().observedExpected().min(), "left out: the budget derives it per stream");
        assertEquals(1.5, c.calibration().observedExpected().max(), "given: kept");
        assertEquals(0.8, c.calibration().observedExpectedBand().min(), "the fallback where no budget derives it");
        assertEquals(1.5, c.calibration().observedExpectedBand().max());
        assertEquals(0.7, c.calibration().slopeBand().min());
        assertTrue(c.calibration().bandsLeftOut());
        assertEquals(0.0001, c.calibration().hosmerLemeshowP());
        assertNull(c.oddsRatioBounds());
        assertNull(c.cusum());
        assertNotNull(c.guard());
        assertEquals(100L, c.guard().minEvents());
        assertTrue(c.guard().acceptFirth());
    }

    @Test
    void termsAsNamesOrMappings() throws Exception {
        AlertRulesConfig c = bind("""
                guard: {minEvents: 300, allowStates: [too-few-events]}
                oddsRatioDrift:
                  limit: 3.5
                  terms:
                    - household_contact
                    - {term: age_band, level: "65+", limit: 4, consecutive: 2}
                oddsRatioBounds:
                  terms:
                    - {term: recent_travel, level: "yes", above: 5.0}
                cusum:
                  up: 2
                  terms: [household_contact]
                """);
        assertEquals(300L, c.guard().minEvents());
        assertEquals("household_contact", c.oddsRatioDrift().terms().get(0).term());
        assertNull(c.oddsRatioDrift().terms().get(0).level());
        assertEquals("65+", c.oddsRatioDrift().terms().get(1).level());
        assertEquals(4.0, c.oddsRatioDrift().terms().get(1).limit());
        assertEquals(2, c.oddsRatioDrift().terms().get(1).consecutive());
        assertEquals(2.0, c.oddsRatioDrift().clearLimit());
        assertEquals(5.0, c.oddsRatioBounds().terms().get(0).above());
        assertEquals(2.0, c.cusum().up());
        assertEquals(1 / 1.5, c.cusum().down(), 1e-15);
        assertNull(c.cusum().limit(), "left to the false-alarm budget");
        assertEquals(2, c.cusum().clearAfter());
        assertEquals(0.5, c.cusum().clearFraction());
        assertEquals("household_contact", c.cusum().terms().get(0).term());
    }

    @Test
    void invalidValuesNameTheKey() {
        Exception e = assertThrows(IllegalArgumentException.class, () -> bind("oddsRatioDrift: {limit: 2, clearLimit: 3}"));
        assertTrue(e.getMessage().contains("oddsRatioDrift.clearLimit"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> bind("cusum: {clearFraction: 1.0}"));
        assertTrue(e.getMessage().contains("cusum.clearFraction"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> bind("cusum: {up: 0.9}"));
        assertTrue(e.getMessage().contains("cusum.up"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> bind("guard: {allowStates: [sideways]}"));
        assertTrue(e.getMessage().contains("guard.allowStates"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> bind("oddsRatioBounds: {terms: [{term: x}]}"));
        assertTrue(e.getMessage().contains("above, below or both"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> bind("oddsRatioBounds: {}"));
        assertTrue(e.getMessage().contains("oddsRatioBounds.terms"), e.getMessage());
    }

    @Test
    void defaultsTurnOnCalibrationAndBothCusumsButNotTheWindowZRule() {
        AlertRulesConfig d = AlertRulesConfig.defaults();
        assertNull(d.oddsRatioDrift(), "the window z-rule runs only when configured");
        assertNotNull(d.calibration());
        assertNotNull(d.cusum());
        assertNotNull(d.oddsRatioCusum());
        assertNull(d.oddsRatioBounds());
    }
}
