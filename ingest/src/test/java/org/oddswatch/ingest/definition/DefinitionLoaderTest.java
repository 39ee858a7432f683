package org.oddswatch.ingest.definition;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.net.URISyntaxException;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.engine.AlertRulesConfig;
import org.oddswatch.estimator.terms.BinaryTerm;
import org.oddswatch.estimator.terms.CategoricalTerm;
import org.oddswatch.estimator.terms.NumericTerm;
import org.oddswatch.estimator.terms.UndeclaredLevelPolicy;

class DefinitionLoaderTest {

    /** A valid two-monitor definition; tests break one line of it at a time. */
    static final String VALID = String.join("\n",
            "monitors:",                                                       // 1
            "  - name: north",                                                  // 2
            "    input: {topic: clinic-tests}",                                 // 3
            "    event:",                                                       // 4
            "      id: /id",                                                    // 5
            "      time: /collectedAt",                                         // 6
            "      outcome: {field: /result, positive: [positive], negative: [negative]}", // 7
            "    terms:",                                                       // 8
            "      - {name: household_contact, field: /exposure/household, kind: binary, watched: true}", // 9
            "      - {name: age_years, field: /age, kind: numeric, per: 10}",   // 10
            "      - name: age_band",                                           // 11
            "        field: /ageBand",                                          // 12
            "        kind: categorical",                                        // 13
            "        levels: ['0-17', '18-39', '40-64', '65+']",                // 14
            "        reference: '18-39'",                                       // 15
            "    window: {width: P28D, step: P7D, lateness: P2D}",              // 16
            "  - name: south",                                                  // 17
            "    input: {topic: clinic-tests}",                                 // 18
            "    event: {id: /id, time: /t, outcome: {field: /r}}",             // 19
            "    window:",                                                      // 20
            "      width: P14D",                                                // 21
            "      step: P7D",                                                  // 22
            "");

    private static MonitorConfig parse(String text) throws DefinitionException {
        return DefinitionLoader.parse("monitors.yaml", text, Map.of(), null);
    }

    private static DefinitionException error(String text) {
        return assertThrows(DefinitionException.class, () -> parse(text));
    }

    @Test
    void loadsSeveralMonitorsWithDefaults() throws Exception {
        MonitorConfig config = parse(VALID);
        assertEquals(2, config.monitors().size());
        MonitorDefinition north = config.monitor("north");
        assertEquals("clinic-tests", north.topic());
        assertEquals("/exposure/household", north.terms().get(0).field().toString());
        BinaryTerm household = (BinaryTerm) north.terms().get(0).term();
        assertEquals("yes", household.level());
        assertEquals("no", household.reference());
        assertTrue(household.watched());
        assertEquals(10.0, ((NumericTerm) north.terms().get(1).term()).per());
        CategoricalTerm band = (CategoricalTerm) north.terms().get(2).term();
        assertEquals(List.of("0-17", "18-39", "40-64", "65+"), band.levels());
        assertEquals(UndeclaredLevelPolicy.REJECT, band.undeclared());
        assertEquals(Duration.ofDays(2), north.window().lateness());
        assertEquals(4, north.geometry().bucketsPerWindow());
        assertEquals(Duration.ofDays(1), north.event().maxFutureSkew());
        assertEquals(5, north.event().futureConfirm());
        assertEquals(Duration.ofHours(1), north.event().futureSpan());
        assertEquals(1000, north.event().futureHold());
        assertEquals(0.95, north.estimates().level());
        assertEquals("wilson", north.estimates().prevalenceInterval());
        assertEquals(4096, north.estimates().patternLimit());
        assertEquals("oddswatch-estimates", north.outputs().estimatesTopic());
        assertNull(north.split());
        MonitorDefinition south = config.monitor("south");
        assertEquals(List.of("positive", "true", "1"), south.event().outcome().positive());
        assertEquals(Duration.ZERO, south.window().lateness());
        assertEquals(List.of(north, south), config.monitorsFor("clinic-tests"));
        assertEquals("127.0.0.1:8470", config.service().http());
    }

    @Test
    void referenceLevelMustBeDeclared() {
        DefinitionException e = error(VALID.replace("reference: '18-39'", "reference: '30-39'"));
        assertEquals("monitors.yaml:15: monitors[0].terms[2].reference: level '30-39' is not one of the declared levels",
                e.getMessage());
    }

    @Test
    void widthMustBeAMultipleOfStep() {
        DefinitionException e = error(VALID.replace("width: P14D", "width: P10D"));
        assertEquals(21, e.line());
        assertEquals("monitors[1].window.width", e.key());
        assertTrue(e.problem().contains("multiple of step"), e.problem());
    }

    /** Each line is one located error, never an arithmetic overflow or a run of minutes. */
    @Test
    void durationsAreBoundedSoNothingOverflowsOrRunsForMinutes() throws Exception {
        assertEquals("monitors.yaml:16: monitors[0].window.width: P999999999999D is longer than the longest duration"
                + " allowed, 3660 days (P3660D)", error(VALID.replace("width: P28D", "width: P999999999999D")).getMessage());
        assertEquals("monitors.yaml:16: monitors[0].window.width: P1000000D is longer than the longest duration"
                + " allowed, 3660 days (P3660D)",
                error(VALID.replace("width: P28D, step: P7D", "width: P1000000D, step: P1D")).getMessage());
        // the boundaries: 3660 days and 1000 steps per window are allowed, one more is not
        assertEquals(Duration.ofDays(3660), parse(VALID.replace("lateness: P2D", "lateness: P3660D"))
                .monitor("north").window().lateness());
        assertEquals("monitors[0].window.lateness", error(VALID.replace("lateness: P2D", "lateness: P3661D")).key());
        assertEquals(1000, parse(VALID.replace("width: P28D, step: P7D", "width: P1000D, step: P1D"))
                .monitor("north").geometry().bucketsPerWindow());
        assertEquals("monitors.yaml:16: monitors[0].window.width: width P1001D is 1001 steps of P1D; at most 1000 steps"
                + " per window are allowed (every window sums that many buckets)",
                error(VALID.replace("width: P28D, step: P7D", "width: P1001D, step: P1D")).getMessage());
        assertEquals("monitors.yaml:16: monitors[0].window.step: PT0.0001S is not a whole number of milliseconds",
                error(VALID.replace("step: P7D", "step: PT0.0001S")).getMessage());
        assertEquals("monitors.yaml:16: monitors[0].window.align: '+999999999-01-01T00:00:00Z' is outside the years"
                + " 1 to 9999", error(VALID.replace("lateness: P2D}", "lateness: P2D, align: +999999999-01-01T00:00:00Z}"))
                .getMessage());
        assertEquals("monitors.yaml:1: service.refresh: P999999999999D is longer than the longest duration allowed,"
                + " 3660 days (P3660D)", error("service: {refresh: P999999999999D}\n" + VALID).getMessage());
    }

    @Test
    void aSecondYamlDocumentIsAnError() {
        DefinitionException e = error(VALID + "---\nmonitors: []\n");
        assertEquals("monitors.yaml:24: a second YAML document starts here; a definition file holds exactly one",
                e.getMessage());
    }

    @Test
    void aFileThatIsNotUtf8NamesTheLineOfTheFirstBadByte(@org.junit.jupiter.api.io.TempDir Path dir) throws Exception {
        byte[] text = VALID.replace("name: south", "name: s\u00e9d").getBytes(java.nio.charset.StandardCharsets.ISO_8859_1);
        Path file = dir.resolve("latin1.yaml");
        java.nio.file.Files.write(file, text);
        DefinitionException e = assertThrows(DefinitionException.class, () -> DefinitionLoader.load(file, Map.of()));
        assertEquals(file + ":17: not valid UTF-8 (byte 0xe9 at column 12); save the definition as UTF-8",
                e.getMessage());
    }

    /** Type errors in rule settings are located and worded without Java type names. */
    @Test
    void ruleSettingTypeErrorsNameTheKeyInTheDefinitionsWords() {
        String rules = VALID.replace("window: {width: P28D, step: P7D, lateness: P2D}",
                "window: {width: P28D, step: P7D, lateness: P2D}\n    rules: %s");
        assertEquals("monitors.yaml:17: monitors[0].rules.oddsRatioDrift.limit: expected a number, found 'abc'",
                error(rules.formatted("{oddsRatioDrift: {limit: abc}}")).getMessage());
        assertEquals("monitors.yaml:17: monitors[0].rules.oddsRatioDrift: expected a mapping of settings, found a list",
                error(rules.formatted("{oddsRatioDrift: [1]}")).getMessage());
        assertEquals("monitors.yaml:17: monitors[0].rules.oddsRatioDrift.consecutive: expected a whole number within"
                + " the range of an int, found '1.5'", error(rules.formatted("{oddsRatioDrift: {consecutive: 1.5}}"))
                .getMessage());
        assertEquals("monitors.yaml:17: monitors[0].rules.oddsRatioDrift.consecutive: expected a whole number within"
                + " the range of an int, found '99999999999999999999'",
                error(rules.formatted("{oddsRatioDrift: {consecutive: 99999999999999999999}}")).getMessage());
        assertEquals("monitors.yaml:2: monitors[0].name: unsupported YAML value (a tagged or binary value); write it as"
                + " plain text", error(VALID.replace("name: north", "name: !!binary aGVsbG8=")).getMessage());
    }

    @Test
    void futureConfirmIsAtLeastTwoAndTheHoldHoldsThatMany() throws Exception {
        String base = VALID.replace("      time: /collectedAt\n", "      time: /collectedAt\n      futureConfirm: %s\n");
        assertEquals(7, parse(base.formatted("7")).monitor("north").event().futureConfirm());
        DefinitionException e = error(base.formatted("1"));
        assertEquals("monitors.yaml:7: monitors[0].event.futureConfirm: must be at least 2 (one event alone never"
                + " confirms a new frontier)", e.getMessage());
        e = error(base.formatted("4\n      futureHold: 3"));
        assertEquals("monitors.yaml:8: monitors[0].event.futureHold: must be from futureConfirm (4) to 10000",
                e.getMessage());
        e = error(base.formatted("4\n      futureSpan: -PT1H"));
        assertEquals("monitors.yaml:8: monitors[0].event.futureSpan: must not be negative", e.getMessage());
    }

    @Test
    void durationsMustParse() {
        DefinitionException e = error(VALID.replace("step: P7D\n", "step: 7 days\n"));
        assertEquals(22, e.line());
        assertEquals("monitors[1].window.step", e.key());
        assertTrue(e.problem().contains("ISO-8601"), e.problem());
    }

    @Test
    void pointersMustBeWellFormed() {
        DefinitionException e = error(VALID.replace("field: /ageBand", "field: ageBand"));
        assertEquals("monitors.yaml:12: monitors[0].terms[2].field: 'ageBand' is not a JSON Pointer: it must start"
                + " with '/' (for example /exposure/household)", e.getMessage());
        DefinitionException tilde = error(VALID.replace("time: /collectedAt", "time: /collected~2At"));
        assertEquals(6, tilde.line());
        assertEquals("monitors[0].event.time", tilde.key());
    }

    @Test
    void unknownKeysAreNamed() {
        DefinitionException e = error(VALID.replace("lateness: P2D", "latenes: P2D"));
        assertEquals(16, e.line());
        assertEquals("monitors[0].window.latenes", e.key());
        assertTrue(e.problem().startsWith("unknown key"), e.problem());
    }

    @Test
    void missingKeysNameTheirParent() {
        DefinitionException e = error(VALID.replace("      id: /id\n", ""));
        assertEquals("monitors[0].event", e.key());
        assertEquals(4, e.line());
        assertEquals("missing required key 'id'", e.problem());
    }

    @Test
    void stratifyByMustBeCategorical() {
        DefinitionException e = error(VALID.replace("    window: {width: P28D",
                "    estimates: {stratifyBy: age_years}\n    window: {width: P28D"));
        assertEquals("monitors.yaml:16: monitors[0].estimates.stratifyBy: 'age_years' must be a categorical term",
                e.getMessage());
    }

    @Test
    void theOldNamesOfTheEstimateKeysSayWhichKeyReplacedThem() {
        DefinitionException method = error(VALID.replace("    window: {width: P28D",
                "    estimates: {prevalenceMethod: jeffreys}\n    window: {width: P28D"));
        assertEquals("monitors.yaml:16: monitors[0].estimates.prevalenceMethod: this key is now called "
                + "'prevalenceInterval'; write prevalenceInterval instead", method.getMessage());
        DefinitionException stratum = error(VALID.replace("    window: {width: P28D",
                "    estimates: {stratumTerm: age_band}\n    window: {width: P28D"));
        assertEquals("monitors[0].estimates.stratumTerm", stratum.key());
        assertEquals(16, stratum.line());
        assertEquals("this key is now called 'stratifyBy'; write stratifyBy instead", stratum.problem());
    }

    @Test
    void baselinePeriodMustEndAfterItStarts() {
        DefinitionException e = error(VALID + "    baseline: {from: 2026-03-01T00:00:00Z, to: 2026-02-01T00:00:00Z}\n");
        assertEquals(23, e.line());
        assertEquals("monitors[1].baseline.to", e.key());
    }

    @Test
    void ruleTermsMustBeDeclaredAndWatched() {
        String rules = "    rules:\n      oddsRatioDrift:\n        terms: [age_years]\n";
        DefinitionException notWatched = error(VALID.replace("  - name: south", rules + "  - name: south"));
        assertEquals("monitors.yaml:19: monitors[0].rules.oddsRatioDrift.terms[0]: term 'age_years' is not watched"
                + " (set watched: true on it)", notWatched.getMessage());
        DefinitionException undeclared = error(VALID.replace("  - name: south",
                rules.replace("age_years", "travel") + "  - name: south"));
        assertTrue(undeclared.getMessage().endsWith("'travel' is not a declared term"), undeclared.getMessage());
    }

    @Test
    void ruleSettingsAreBoundWithTheirLines() throws Exception {
        String rules = "    rules:\n      oddsRatioDrift:\n        limt: 3\n";
        DefinitionException unknown = error(VALID.replace("  - name: south", rules + "  - name: south"));
        assertEquals("monitors.yaml:19: monitors[0].rules.oddsRatioDrift.limt: unknown rule setting",
                unknown.getMessage());
        DefinitionException invalid = error(VALID.replace("  - name: south",
                "    rules:\n      guard: {minEvents: -5}\n  - name: south"));
        assertEquals(18, invalid.line());
        assertTrue(invalid.key().startsWith("monitors[0].rules.guard"), invalid.key());
        assertTrue(invalid.problem().contains("minEvents"), invalid.problem());
        MonitorConfig bound = parse(VALID.replace("  - name: south",
                "    rules:\n      oddsRatioDrift: {limit: 3.5, terms: [household_contact]}\n  - name: south"));
        assertEquals(3.5, bound.monitor("north").rules().oddsRatioDrift().limit());
        assertTrue(parse(VALID).monitor("north").rules().cusum() != null, "no rules key: the defaults");
    }

    /**
     * Listing one rule section does not switch the others off: every rule with defaults runs unless
     * its section says {@code enabled: false}, and a definition that relied on the old meaning (an
     * unlisted rule was off) gets a notice per rule now running.
     */
    @Test
    void rulesRunUnlessSwitchedOffAndUnlistedOnesAreNoticed() throws Exception {
        MonitorConfig listed = parse(VALID.replace("  - name: south",
                "    rules:\n      oddsRatioDrift: {limit: 3.5}\n  - name: south"));
        MonitorDefinition north = listed.monitor("north");
        assertNotNull(north.rules().cusum(), "cusum is not listed: it runs with its defaults");
        assertNull(north.rules().cusum().limit(), "its limit is left to the false-alarm budget");
        assertEquals(0.8, north.rules().calibration().observedExpected().min());
        assertNull(north.rules().oddsRatioBounds(), "bounds have no defaults");
        assertEquals(2, north.notices().size(), north.notices().toString());
        assertTrue(north.notices().get(0).startsWith("monitors[0].rules.calibration is not listed, so it runs"),
                north.notices().get(0));
        assertTrue(north.notices().get(1).contains("'cusum: {enabled: false}'"), north.notices().get(1));
        assertEquals(List.of(), parse(VALID).monitor("north").notices(), "no rules key: nothing changed meaning");

        MonitorConfig off = parse(VALID.replace("  - name: south", "    rules:\n      oddsRatioDrift: {enabled: true}\n"
                + "      calibration: {enabled: false, slopeZ: 2}\n      cusum: {enabled: false}\n  - name: south"));
        AlertRulesConfig rules = off.monitor("north").rules();
        assertEquals(3.0, rules.oddsRatioDrift().limit());
        assertNull(rules.calibration());
        assertNull(rules.cusum());
        assertEquals(List.of(), off.monitor("north").notices());
        assertEquals(List.of("odds-ratio-drift: on (needs a baseline)",
                "odds-ratio-bounds: off [not-configured]: it runs only on bounds the definition gives (oddsRatioBounds.terms)",
                "calibration: off [switched-off]: switched off in the definition (rules.calibration.enabled: false)",
                "bernoulli-cusum: off [switched-off]: switched off in the definition (rules.cusum.enabled: false)"),
                rules.switches().stream().map(AlertRulesConfig.RuleSwitch::describe).toList());

        DefinitionException notBoolean = error(VALID.replace("  - name: south",
                "    rules:\n      cusum: {enabled: maybe}\n  - name: south"));
        assertEquals(18, notBoolean.line());
        assertEquals("monitors[0].rules.cusum.enabled", notBoolean.key());
    }

    @Test
    void duplicateNamesAreErrors() {
        DefinitionException monitor = error(VALID.replace("name: south", "name: north"));
        assertEquals(17, monitor.line());
        assertEquals("monitors[1].name", monitor.key());
        DefinitionException term = error(VALID.replace("name: age_years", "name: household_contact"));
        assertEquals(10, term.line());
    }

    @Test
    void aFormulaStringIsNotAcceptedForTerms() {
        String terms = VALID.substring(VALID.indexOf("    terms:\n"), VALID.indexOf("    window: {width: P28D"));
        DefinitionException e = error(VALID.replace(terms, "    terms: \"result ~ household_contact + age\"\n"));
        assertEquals("monitors.yaml:8: monitors[0].terms: terms are a list of mappings (name, field, kind, ...),"
                + " not a formula", e.getMessage());
    }

    @Test
    void invalidYamlNamesTheLine() {
        DefinitionException e = error("monitors:\n  - name: [unclosed\n");
        assertEquals("monitors.yaml", e.file());
        assertTrue(e.line() >= 2, "line " + e.line());
        assertTrue(e.problem().startsWith("not valid YAML"), e.problem());
    }

    @Test
    void kafkaPropertiesComeFromFileAndEnvironment() throws Exception {
        String text = "kafka:\n  bootstrap.servers: broker:9092\n  sasl:\n    mechanism: PLAIN\n" + VALID;
        MonitorConfig config = DefinitionLoader.parse("monitors.yaml", text,
                Map.of("ODDSWATCH_KAFKA_BOOTSTRAP_SERVERS", "other:9093", "ODDSWATCH_KAFKA_SECURITY_PROTOCOL", "SSL",
                        "UNRELATED", "x"), null);
        assertEquals(Map.of("bootstrap.servers", "other:9093", "sasl.mechanism", "PLAIN", "security.protocol", "SSL"),
                config.kafka());
    }

    @Test
    void checksumFollowsTheModelOnly() throws Exception {
        MonitorConfig config = parse(VALID);
        String north = config.monitor("north").checksum();
        assertEquals(64, north.length());
        String renamedWindow = parse(VALID.replace("width: P28D", "width: P21D")).monitor("north").checksum();
        assertEquals(north, renamedWindow);
        String otherReference = parse(VALID.replace("reference: '18-39'", "reference: '0-17'"))
                .monitor("north").checksum();
        assertNotEquals(north, otherReference);
    }

    /**
     * Baselines and alerts carry the checksum, so the same file must always give the same value: the
     * SHA-256 of the canonical model text (outcome values sorted, defaults filled in, null catch-all
     * left out). Source: {@code sha256sum} (GNU coreutils 9.1) of the texts below, written by hand.
     */
    @Test
    void checksumIsTheSha256OfTheCanonicalModelText() throws Exception {
        MonitorConfig config = parse(VALID);
        // {"outcome":{"field":"/result","positive":["positive"],"negative":["negative"]},"terms":[
        // {"name":"household_contact","field":"/exposure/household","kind":"binary","level":"yes","reference":"no",
        // "undeclared":"REJECT"},{"name":"age_years","field":"/age","kind":"numeric","per":10.0},{"name":"age_band",
        // "field":"/ageBand","kind":"categorical","levels":["0-17","18-39","40-64","65+"],"reference":"18-39",
        // "undeclared":"REJECT"}]}
        assertEquals("f63fbf42bf8439e6f23d54e4f5d6360d5163d77a7265808a279577eec505ad3e",
                config.monitor("north").checksum());
        // {"outcome":{"field":"/r","positive":["1","positive","true"],"negative":["0","false","negative"]},"terms":[]}
        assertEquals("96162ce85c51a65197cc7807e746a6e4ab92c0e86430600a14a07acde22f5829",
                config.monitor("south").checksum());
    }

    @Test
    void yesAndNoStayText() throws Exception {
        MonitorConfig config = parse(VALID.replace("kind: binary, watched: true",
                "kind: binary, level: yes, reference: no, watched: yes"));
        BinaryTerm term = (BinaryTerm) config.monitor("north").terms().get(0).term();
        assertEquals("yes", term.level());
        assertEquals("no", term.reference());
        assertTrue(term.watched());
    }

    @Test
    void loadsTheHouseScenarioFile() throws Exception {
        Path file = resource("/definitions/respiratory.yaml");
        MonitorConfig config = DefinitionLoader.load(file, Map.of());
        MonitorDefinition monitor = config.monitors().get(0);
        assertEquals("respiratory", monitor.name());
        assertEquals(8, monitor.split().maxStreams());
        assertEquals("respiratory/east", monitor.streamName("east"));
        assertEquals(4, monitor.strata());
        assertEquals(List.of("household_contact", "recent_travel"),
                monitor.terms().stream().filter(t -> t.term().watched()).map(TermSpec::name).toList());
        // intercept + 2 binary + 3 age-band indicators + 1 sex indicator
        assertEquals(7, monitor.designCoder().width());
        assertEquals("PLAINTEXT", config.kafka().get("security.protocol"));
        assertEquals(file.toString(), config.file());
    }

    @Test
    void unreadableFileIsADefinitionError() {
        DefinitionException e = assertThrows(DefinitionException.class,
                () -> DefinitionLoader.load(Path.of("does-not-exist.yaml"), Map.of()));
        assertEquals("does-not-exist.yaml", e.file());
        assertEquals(0, e.line());
    }

    static Path resource(String name) throws URISyntaxException {
        return Path.of(DefinitionLoaderTest.class.getResource(name).toURI());
    }
}
