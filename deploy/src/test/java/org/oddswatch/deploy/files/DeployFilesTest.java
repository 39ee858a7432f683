package org.oddswatch.deploy.files;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.MappingIterator;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.oddswatch.estimator.reference.ReferenceTools;
import org.oddswatch.ingest.definition.DefinitionException;
import org.oddswatch.ingest.definition.DefinitionLoader;
import org.oddswatch.ingest.definition.MonitorConfig;

/**
 * Validates the deployment files as far as this machine allows: every YAML file under deploy/
 * parses; the monitor definitions (examples and the Kubernetes ConfigMap) load with the real
 * loader; cross-references between the files agree; {@code promtool check config} and
 * {@code kubectl kustomize} run where those tools are installed.
 */
class DeployFilesTest {

    /** The deploy module directory (Maven runs tests there). */
    private static final Path DEPLOY = Path.of("").toAbsolutePath();
    private static final YAMLMapper YAML = new YAMLMapper();

    static List<Path> yamlFiles() throws IOException {
        try (Stream<Path> files = Files.walk(DEPLOY)) {
            return files.filter(Files::isRegularFile)
                    .filter(p -> !DEPLOY.relativize(p).startsWith("target") && !DEPLOY.relativize(p).startsWith("src"))
                    .filter(p -> p.toString().endsWith(".yaml") || p.toString().endsWith(".yml"))
                    .sorted().toList();
        }
    }

    static List<JsonNode> documents(Path file) throws IOException {
        List<JsonNode> docs = new ArrayList<>();
        try (MappingIterator<JsonNode> it = YAML.readerFor(JsonNode.class).readValues(file.toFile())) {
            while (it.hasNext()) {
                docs.add(it.next());
            }
        }
        return docs;
    }

    @Test
    void everyYamlFileUnderDeployParses() throws IOException {
        List<Path> files = yamlFiles();
        List<String> names = files.stream().map(p -> DEPLOY.relativize(p).toString()).toList();
        for (String expected : List.of("compose.yaml", "prometheus/prometheus.yml", "prometheus/oddswatch-rules.yml",
                "k8s/deployment.yaml", "k8s/service.yaml", "k8s/configmap.yaml", "k8s/kustomization.yaml",
                "examples/respiratory.yaml", "examples/steady.yaml")) {
            assertTrue(names.contains(expected), expected + " among " + names);
        }
        for (Path file : files) {
            List<JsonNode> docs = documents(file);
            assertFalse(docs.isEmpty(), file + " has a document");
            for (JsonNode doc : docs) {
                assertTrue(doc.isObject(), file + ": a mapping at the top");
            }
        }
    }

    @Test
    void exampleDefinitionsLoad() throws DefinitionException {
        MonitorConfig respiratory = DefinitionLoader.load(DEPLOY.resolve("examples/respiratory.yaml"), Map.of());
        assertEquals(List.of("respiratory", "respiratory-by-region"),
                respiratory.monitors().stream().map(m -> m.name()).toList());
        MonitorConfig steady = DefinitionLoader.load(DEPLOY.resolve("examples/steady.yaml"), Map.of());
        assertEquals(1, steady.monitors().size());
    }

    @Test
    void kubernetesManifestsAgreeWithEachOther() throws IOException, DefinitionException {
        JsonNode configMap = documents(DEPLOY.resolve("k8s/configmap.yaml")).get(0);
        JsonNode deployment = documents(DEPLOY.resolve("k8s/deployment.yaml")).get(0);
        JsonNode service = documents(DEPLOY.resolve("k8s/service.yaml")).get(0);
        assertEquals("ConfigMap", configMap.path("kind").asText());
        assertEquals("Deployment", deployment.path("kind").asText());
        assertEquals("Service", service.path("kind").asText());

        // the definition inside the ConfigMap is valid and listens where the probes look
        MonitorConfig definition = DefinitionLoader.parse("k8s/configmap.yaml#monitors.yaml",
                configMap.at("/data/monitors.yaml").asText(), Map.of(), null);
        assertEquals("0.0.0.0:8470", definition.service().http());

        JsonNode pod = deployment.at("/spec/template");
        JsonNode container = pod.at("/spec/containers/0");
        // Liveness asks /status, which answers while the process runs: /health is 503 during a
        // rebuild and while the broker is away, and restarting the pod would mend neither.
        Map<String, String> paths = Map.of("readinessProbe", "/health", "livenessProbe", "/status",
                "startupProbe", "/health");
        for (Map.Entry<String, String> probe : paths.entrySet()) {
            assertEquals(probe.getValue(), container.at("/" + probe.getKey() + "/httpGet/path").asText(), probe.getKey());
            assertEquals("http", container.at("/" + probe.getKey() + "/httpGet/port").asText(), probe.getKey());
        }
        assertEquals(8470, container.at("/ports/0/containerPort").asInt());
        assertEquals("http", container.at("/ports/0/name").asText());
        assertTrue(container.path("args").toString().contains("0.0.0.0:8470"));
        assertEquals(configMap.at("/metadata/name").asText(), pod.at("/spec/volumes/0/configMap/name").asText());
        assertEquals("/etc/oddswatch", container.at("/volumeMounts/0/mountPath").asText());
        assertTrue(container.path("args").toString().contains("/etc/oddswatch/monitors.yaml"));
        assertTrue(pod.at("/spec/securityContext/runAsNonRoot").asBoolean());

        // the Service selects the pods and targets the named port
        service.at("/spec/selector").fields().forEachRemaining(e ->
                assertEquals(e.getValue().asText(), pod.path("metadata").path("labels").path(e.getKey()).asText(), e.getKey()));
        assertEquals("http", service.at("/spec/ports/0/targetPort").asText());
    }

    @Test
    void composeFileReferencesExistingFilesAndTheScrapeTargetMatches() throws IOException {
        JsonNode compose = documents(DEPLOY.resolve("compose.yaml")).get(0);
        JsonNode services = compose.path("services");
        for (String s : List.of("kafka", "topics", "oddswatch", "prometheus")) {
            assertTrue(services.has(s), s);
        }
        assertTrue(services.at("/kafka/environment/KAFKA_PROCESS_ROLES").asText().contains("controller"), "KRaft");
        assertTrue(Files.isRegularFile(DEPLOY.resolve("..").resolve(services.at("/oddswatch/build/dockerfile").asText())));
        for (String service : List.of("oddswatch", "prometheus")) {
            for (JsonNode volume : services.at("/" + service + "/volumes")) {
                String source = volume.asText().split(":")[0];
                if (source.startsWith("./")) {
                    assertTrue(Files.exists(DEPLOY.resolve(source)), service + " mounts " + source);
                }
            }
        }
        // the service listens on the port Prometheus scrapes, under the service's name
        JsonNode prometheus = documents(DEPLOY.resolve("prometheus/prometheus.yml")).get(0);
        String target = prometheus.at("/scrape_configs/0/static_configs/0/targets/0").asText();
        assertEquals("oddswatch:8470", target);
        assertTrue(services.at("/oddswatch/command").toString().contains("0.0.0.0:8470"));
        String config = services.at("/oddswatch/command").get(2).asText();
        assertTrue(config.startsWith("/etc/oddswatch/"), config);
        assertTrue(Files.isRegularFile(DEPLOY.resolve("examples").resolve(config.substring("/etc/oddswatch/".length()))));
        assertEquals("oddswatch-rules.yml", prometheus.at("/rule_files/0").asText());
    }

    @Test
    void promtoolAcceptsThePrometheusConfiguration() throws Exception {
        // Source: promtool from Debian's prometheus package, where installed (not in CI)
        Path promtool = ReferenceTools.onPath("promtool");
        Assumptions.assumeTrue(promtool != null, "promtool is not installed");
        Result r = exec(promtool.toString(), "check", "config", DEPLOY.resolve("prometheus/prometheus.yml").toString());
        assertEquals(0, r.status(), r.output());
        assertTrue(r.output().contains("SUCCESS"), r.output());
    }

    @Test
    void kustomizeRendersTheManifests() throws Exception {
        Path kubectl = ReferenceTools.onPath("kubectl");
        Assumptions.assumeTrue(kubectl != null, "kubectl is not installed");
        Result r = exec(kubectl.toString(), "kustomize", DEPLOY.resolve("k8s").toString());
        assertEquals(0, r.status(), r.output());
        List<String> kinds = new ArrayList<>();
        try (MappingIterator<JsonNode> it = YAML.readerFor(JsonNode.class).readValues(r.output())) {
            while (it.hasNext()) {
                kinds.add(it.next().path("kind").asText());
            }
        }
        assertEquals(List.of("ConfigMap", "Service", "Deployment"), kinds);
    }

    @Test
    void launcherBuildsOnFirstUseAndExecsTheJar() throws IOException {
        Path launcher = DEPLOY.resolve("oddswatch");
        assertTrue(Files.isExecutable(launcher), "deploy/oddswatch is executable");
        String text = Files.readString(launcher, StandardCharsets.UTF_8);
        assertTrue(text.startsWith("#!/usr/bin/env bash"));
        assertTrue(text.contains("target/oddswatch.jar"));
        assertTrue(text.contains("-DskipTests") && text.contains("package"));
        assertTrue(text.contains("exec \"$java_bin\""));
    }

    record Result(int status, String output) {
    }

    private static Result exec(String... command) throws IOException, InterruptedException {
        Process p = new ProcessBuilder(command).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertTrue(p.waitFor(60, TimeUnit.SECONDS), "finished");
        return new Result(p.exitValue(), out);
    }
}
